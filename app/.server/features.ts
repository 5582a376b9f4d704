// Each feature that runs work inside the server process registers it with onBoot() on import.
import "./jobs/tracking-queue";
// The mail sender first: it must be listening before the reminder task enqueues anything.
import "./mail/outbox-sender";
import "./calibration-reminders";
// PostgreSQL: the shared queue's workers (tracking, mail, reminders) in this process, unless TANKSIDE_WORKERS=0.
import "./jobs/job-workers";
// `npm run demo`: the invented lab seeded by the server, its runs rendered and tracked in the background.
import "./demo-lab";

// `npm run worker`: a process that takes Tankside's background jobs — tracking, mail, calibration
// reminders — from the queue it shares with the web processes and other workers on PostgreSQL.
// It runs from source through tsx (as the tracking threads and the command line do), so it needs no
// build of its own and works the same beside `npm run build` and `npm start`.
import { isSqlite, migrate, sequelize } from "./db";
import { env, mailSetupProblem } from "./env";

if (isSqlite) {
  console.error(
    "npm run worker needs PostgreSQL (DATABASE_URL=postgres://…): with SQLite the web process runs tracking, mail and reminders itself, on one machine.",
  );
  process.exit(1);
}
const mailProblem = mailSetupProblem(process.env);
if (mailProblem) {
  console.error(mailProblem.replace("Tankside will not start", "The worker will not start"));
  process.exit(1);
}

const { startWorkers, stopWorkers, workerName } = await import("./jobs/job-workers");
const { stopQueueClient } = await import("./jobs/boss");
const { closeTrackingPool } = await import("./tracking/tracking-pool");
const { stopFakeSmtp } = await import("./mail/fake-smtp");

const applied = await migrate();
if (applied.length) console.log(`[worker] migrations applied: ${applied.join(", ")}`);
if (!env.smtpUrl) console.log("[worker] no SMTP_URL: mail goes to a built-in fake server (its inbox is the lab manager's mail page)");
await startWorkers();
console.log(`[worker] taking tracking, mail and reminder jobs as ${workerName}`);

let stopping = false;
async function stop(signal: string) {
  if (stopping) return;
  stopping = true;
  console.log(`[worker] ${signal}: stopping (a tracking job under way is handed back to the queue)`);
  try {
    await stopWorkers();
    await closeTrackingPool();
    await stopQueueClient();
    await stopFakeSmtp();
    await sequelize.close();
  } catch (err) {
    console.error(err);
  }
  process.exit(0);
}
process.on("SIGINT", () => void stop("SIGINT"));
process.on("SIGTERM", () => void stop("SIGTERM"));

// Each feature that runs work inside the server process registers it with onBoot() on import.
import "./jobs/tracking-queue";
import "./calibration-reminders";

import { migrate, sequelize } from "./db";
import { databaseProblem } from "./db/connection";
import { StartupProblem } from "./startup-problem";
import { env, mailSetupProblem, workersSetupProblem } from "./env";
import { startFakeSmtp } from "./mail/fake-smtp";
import { purgeExpiredSessions } from "./auth/session";
import { removeOrphanUploads } from "./uploads/orphans";
import { store, storageStartupProblem } from "./storage";

type Hook = { name: string; start: () => Promise<void> | void; stop?: () => Promise<void> | void };
const hooks: Hook[] = [];

/** Features register what must run in the server process (job queue, reminders) here. */
export function onBoot(hook: Hook) {
  if (!hooks.some((h) => h.name === hook.name)) hooks.push(hook);
}

const key = "__tanksideBoot" as const;
const g = globalThis as typeof globalThis & { [key]?: Promise<void> };

/** Runs once per process before the first request: migrations, the fake mail server, background tasks. */
export function boot(): Promise<void> {
  g[key] ??= (async () => {
    // Touch the session secret early so a production start without one fails loudly.
    void env.sessionSecret;
    const problem = mailSetupProblem(process.env) ?? workersSetupProblem({ ...process.env, DATABASE_URL: env.databaseUrl });
    if (problem) {
      console.error(problem);
      process.exit(1);
    }
    const dbProblem = await databaseProblem();
    if (dbProblem) throw new StartupProblem(dbProblem);
    // Where frames and attachments live: a bad S3 setting stops the start with one line naming it.
    const storageProblem = await storageStartupProblem();
    if (storageProblem) {
      console.error(storageProblem);
      process.exit(1);
    }
    console.log(`[tankside] frames and attachments are kept in ${store().where}`);
    const applied = await migrate();
    if (applied.length) console.log(`[tankside] migrations applied: ${applied.join(", ")}`);
    if (!env.smtpUrl) {
      const { port } = await startFakeSmtp();
      console.log(`[tankside] no SMTP_URL: mail goes to the built-in fake server on 127.0.0.1:${port}`);
    }
    await purgeExpiredSessions();
    const orphans = await removeOrphanUploads();
    console.log(`[tankside] unreferenced upload files removed: ${orphans}`);
    for (const hook of hooks) await hook.start();
  })();
  return g[key];
}

export async function shutdown() {
  for (const hook of [...hooks].reverse()) await hook.stop?.();
  await sequelize.close();
}

// Migrates the database named by DATABASE_URL and seeds the invented demo lab when it is empty.
import { migrate, sequelize } from "../app/.server/db";
import { seedDemo } from "../app/.server/seed/demo";
import "../app/.server/seed/steps";
import { stopTrackingQueue } from "../app/.server/jobs/tracking-queue";

const applied = await migrate();
if (applied.length) console.error(`[demo] migrations applied: ${applied.join(", ")}`);
const seeded = await seedDemo((m) => console.error(`[demo] ${m}`));
console.error(seeded ? "[demo] the demo lab is ready" : "[demo] database already has people; left as it is");
await stopTrackingQueue();
await sequelize.close();
process.exit(0);

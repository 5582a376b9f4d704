import { User } from "../db";
import { seedPeople } from "./people";

type Step = { name: string; run: (log: (msg: string) => void) => Promise<void> };
const steps: Step[] = [];

/** Later features add their part of the invented lab here (equipment, runs, calibrations, bookings). */
export function addDemoStep(step: Step) {
  if (!steps.some((s) => s.name === step.name)) steps.push(step);
}

/** Seeds the invented demo lab, only into an empty database. Returns false when people already exist. */
export async function seedDemo(log: (msg: string) => void = console.error): Promise<boolean> {
  if ((await User.count()) > 0) return false;
  await seedPeople();
  log("seeded people");
  for (const step of steps) {
    await step.run(log);
    log(`seeded ${step.name}`);
  }
  return true;
}

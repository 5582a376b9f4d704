import { User } from "../db";
import { seedPeople } from "./people";

export interface SeedOptions {
  /** Leave the demo runs' frames, view setups and tracking to prepareDemoRuns (the server does it in the background). */
  framesLater?: boolean;
}
/** `order` places the step: a bundler may evaluate the seeding modules in another order than steps.ts imports them. */
type Step = { name: string; order: number; run: (log: (msg: string) => void, options?: SeedOptions) => Promise<void> };
const steps: Step[] = [];

/** Later features add their part of the invented lab here (equipment, runs, calibrations, bookings). */
export function addDemoStep(step: Step) {
  if (steps.some((s) => s.name === step.name)) return;
  steps.push(step);
  steps.sort((a, b) => a.order - b.order);
}

/** Seeds the invented demo lab, only into an empty database. Returns false when people already exist. */
export async function seedDemo(log: (msg: string) => void = console.error, options: SeedOptions = {}): Promise<boolean> {
  if ((await User.count()) > 0) return false;
  await seedPeople();
  log("seeded people");
  for (const step of steps) {
    await step.run(log, options);
    log(`seeded ${step.name}`);
  }
  return true;
}

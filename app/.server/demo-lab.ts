// `npm run demo` (TANKSIDE_DEMO_SEED=1): the server seeds the invented lab into an empty database
// before it serves, then renders and tracks the demo runs' frames in the background, so the first
// page answers in seconds rather than after every stack is tracked.
import { onBoot } from "./boot";
import type { DemoProgress } from "./seed/runs";

let stopRequested = false;
let preparing: Promise<void> | null = null;
let progress: DemoProgress | null = null;

/** How far the background preparation of the demo runs is, or null when there is none. */
export function demoPreparation(): DemoProgress | null {
  return progress;
}

async function start() {
  if (process.env.TANKSIDE_DEMO_SEED !== "1") return;
  // steps.ts registers every feature's seeding step, in order; runs.ts is one of them.
  await import("./seed/steps");
  const { seedDemo } = await import("./seed/demo");
  const { prepareDemoRuns } = await import("./seed/runs");
  const log = (message: string) => console.log(`[demo] ${message}`);
  if (await seedDemo(log, { framesLater: true })) log("the demo lab is seeded; its runs' frames are rendered and tracked in the background");
  stopRequested = false;
  preparing = prepareDemoRuns(
    log,
    () => stopRequested,
    (p) => (progress = { ...p, rendering: p.rendering && { ...p.rendering } }),
  )
    .catch((err: unknown) => console.error("[demo] the demo runs could not be prepared:", err))
    .finally(() => {
      progress = null;
    });
}

onBoot({
  name: "demo-lab",
  start,
  stop: async () => {
    stopRequested = true;
    await preparing;
  },
});

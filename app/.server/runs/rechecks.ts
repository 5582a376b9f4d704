import { Run } from "../db";
import { enqueueTracking } from "../jobs/tracking-queue";
import { checkRun } from "./theory";

/**
 * Re-runs what a change to a run's inputs needs, in the background: the fit alone for conditions,
 * calibrations or lab settings; tracking (which ends in a check) for frames or the view setup.
 * The old check stops counting at once, because currentCheck compares fingerprints.
 */
export type Redo = "fit" | "track";

let chain: Promise<void> = Promise.resolve();
let held: Promise<void> | null = null;
let release: (() => void) | null = null;

async function redo(runId: number, userId: number | null, what: Redo) {
  const run = await Run.findByPk(runId);
  if (!run || run.state === "signed_off") return;
  if (what === "track") {
    // Nothing to track yet (no frames or setup) or a job already running: that job's check follows.
    if (userId === null) return;
    await enqueueTracking(run, userId).catch(() => undefined);
    return;
  }
  await checkRun(runId, userId);
}

export function scheduleRecheck(runId: number, userId: number | null, what: Redo) {
  chain = chain
    .then(() => held ?? undefined)
    .then(() => redo(runId, userId, what))
    .catch((err) => console.error(`[runs] re-check of run ${runId} failed:`, err));
}

/** Resolves when every scheduled re-check has run (tests and the seeding wait on it). */
export function whenRechecksIdle() {
  return chain;
}

/** Holds scheduled re-checks until released, so a test can look at a run while its check is out of date. */
export function holdRechecks() {
  if (!held) held = new Promise<void>((r) => (release = r));
  return () => {
    release?.();
    held = null;
    release = null;
  };
}

/**
 * What the main thread and the tracking workers agree on about a stack held in a worker; kept
 * apart from track-worker.ts, whose import loads OpenCV.
 */
import type { DetectionPlan } from "../../lib/tracking/plan";
import type { TurningBackground } from "../../lib/tracking/turning-background";

/**
 * What every frame of one stack shares, handed to a worker once (its first frame of the stack) and
 * kept there: the plan, the background models and the slots of shared memory the frames are
 * decoded into. A frame's task then names the stack and a slot, so no shared buffer, plan or model
 * is cloned per frame (each shared buffer a message carries is a new object and counts as outside
 * memory in the receiving thread's heap, which made it collect garbage far more often).
 */
export interface StackShare {
  id: number;
  plan: DetectionPlan;
  planKey: string;
  background: Uint8Array | null;
  turning: TurningBackground | null;
  /** Frame slots, one after another, each `frameBytes` long. */
  slots: Uint8Array;
  frameBytes: number;
}

/** The answer of a worker that does not hold the stack a frame names: send the task again with it. */
export const unknownStack = "unknown-stack";

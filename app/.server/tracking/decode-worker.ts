/**
 * Worker-thread entry of the decoding thread (decode-thread.ts): reads a frame and decodes the
 * plan's crop into the caller's slot of shared memory. Nothing else runs here, so this thread's
 * heap stays small and the new buffer sharp makes for every decode is collected by its young
 * generation's collections (Decision 89).
 */
import { decodeFrame, type DecodePlan } from "./decode-frame";
import { TrackingError, type TrackingErrorCode } from "./errors";

export type DecodeTask =
  | {
      kind: "decode";
      file: string;
      index: number;
      plan: DecodePlan;
      /** Shared memory at least the crop's size. */
      into: Uint8Array;
    }
  /** Starts the thread (its bundle and sharp loaded) before the first frame. */
  | { kind: "warm-up" };

/**
 * The decoded crop's length in `into`, or the frame's failure in words: a TrackingError would
 * arrive on the other side as a plain Error, without its code and frame.
 */
export type DecodeOutcome = { length: number } | { failed: { code: TrackingErrorCode; message: string; frameIndex: number | null } } | null;

export default async function decodeTask(task: DecodeTask): Promise<DecodeOutcome> {
  if (task.kind === "warm-up") return null;
  try {
    const view = await decodeFrame(task.file, task.index, task.plan, task.into);
    return { length: view.length };
  } catch (error) {
    if (error instanceof TrackingError) return { failed: { code: error.code, message: error.message, frameIndex: error.frameIndex } };
    throw error;
  }
}

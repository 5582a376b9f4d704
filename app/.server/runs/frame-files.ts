import { runKey, runPrefix, store, StorageUnavailableError } from "../storage";

export interface FrameFileStatus {
  /** Ids of frames whose image or thumbnail is not in storage. */
  missing: number[];
  /** The store could not be asked: nothing is known about the files. */
  unavailable: boolean;
}

/**
 * Which of a run's frames have lost their files: one listing of the run's folder (or prefix in
 * the bucket), compared with the names the frame rows give.
 */
export async function frameFileStatus(runId: number, frames: { id: number; storedName: string; thumbName: string | null }[]): Promise<FrameFileStatus> {
  if (!frames.length) return { missing: [], unavailable: false };
  let present: Set<string>;
  try {
    present = new Set((await store().list(runPrefix(runId))).map((o) => o.key));
  } catch (err) {
    if (!(err instanceof StorageUnavailableError)) throw err;
    console.error(`[storage] ${err.message}`);
    return { missing: [], unavailable: true };
  }
  const missing = frames
    .filter((f) => !present.has(runKey(runId, f.storedName)) || (f.thumbName !== null && !present.has(runKey(runId, f.thumbName))))
    .map((f) => f.id);
  return { missing, unavailable: false };
}

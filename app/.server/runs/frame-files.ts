import { frameFileRunId, frameKey, frameThumbKey, runPrefix, store, StorageUnavailableError, type FrameFileRef } from "../storage";

export interface FrameFileStatus {
  /** Ids of frames whose image or thumbnail is not in storage. */
  missing: number[];
  /** The store could not be asked: nothing is known about the files. */
  unavailable: boolean;
}

/**
 * Which of a run's frames have lost their files: one listing of each folder (or prefix in the
 * bucket) that holds them — the run's own, and for a correction the folder of the run whose files
 * it shares — compared with the keys the frame rows give.
 */
export async function frameFileStatus(frames: (FrameFileRef & { id: number })[]): Promise<FrameFileStatus> {
  if (!frames.length) return { missing: [], unavailable: false };
  const folders = [...new Set(frames.map(frameFileRunId))];
  let present: Set<string>;
  try {
    const listings = await Promise.all(folders.map((id) => store().list(runPrefix(id))));
    present = new Set(listings.flat().map((o) => o.key));
  } catch (err) {
    if (!(err instanceof StorageUnavailableError)) throw err;
    console.error(`[storage] ${err.message}`);
    return { missing: [], unavailable: true };
  }
  const missing = frames
    .filter((f) => {
      const thumb = frameThumbKey(f);
      return !present.has(frameKey(f)) || (thumb !== null && !present.has(thumb));
    })
    .map((f) => f.id);
  return { missing, unavailable: false };
}

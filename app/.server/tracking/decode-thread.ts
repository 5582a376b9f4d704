/**
 * The frames a stack's search reads are decoded on a thread of their own (decode-worker.ts), into
 * the search's slots of shared memory. sharp hands every decode back as a new buffer of outside
 * memory (0.45 MB a float frame, 1.35 MB a dye frame). V8 counts outside memory made since its last
 * full collection against the heap's allocation limit, so on the main thread, whose heap holds the
 * whole server, a full mark-compact followed about every 8 MB of frames; on this thread's small
 * heap the young generation's collections free them (Decision 89). libvips still decodes on its
 * own threads; this one only waits for them and copies the result into the slot.
 */
import Piscina from "piscina";
import type { DecodePlan } from "./decode-frame";
import type { DecodeOutcome, DecodeTask } from "./decode-worker";
import { TrackingError } from "./errors";
import { bundledWorker, workerSource } from "./worker-bundle";
import { workerExecArgv } from "./worker-options";

/** The entry's source, bundled like the tracking worker's (worker-bundle.ts). */
const workerName = "decode-worker.ts";
/** Decodes one thread has under way at once; more wait in the queue. */
const concurrentDecodes = 16;

interface DecodeThread {
  piscina: Piscina<DecodeTask, DecodeOutcome>;
  /** Rejects when the thread dies outside a task (it would not load). */
  failed: Promise<never>;
}

let thread: DecodeThread | null = null;

async function decodeThread(): Promise<DecodeThread> {
  if (thread) return thread;
  const filename = await bundledWorker(workerSource(workerName));
  if (thread) return thread;
  const piscina = new Piscina<DecodeTask, DecodeOutcome>({
    filename,
    minThreads: 0,
    maxThreads: 1,
    concurrentTasksPerWorker: concurrentDecodes,
    // As the tracking pool's: a job within the minute finds it started.
    idleTimeout: 60_000,
    execArgv: workerExecArgv(),
  });
  let reject: (error: Error) => void = () => {};
  const failed = new Promise<never>((_, r) => {
    reject = r;
  });
  failed.catch(() => {});
  piscina.on("error", (error: unknown) => {
    if (thread?.piscina === piscina) thread = null;
    const reason = error instanceof Error ? error.message : String(error);
    reject(new Error(`The decoding thread stopped: ${reason}`));
    piscina.destroy().catch(() => {});
  });
  const made: DecodeThread = { piscina, failed };
  thread = made;
  return made;
}

/**
 * The plan's crop of one frame written into `into` (shared memory at least the crop's size), as
 * decodeFrame would write it there; a view of the bytes written. Fails as decodeFrame does.
 */
export async function decodeInto(file: string, index: number, plan: DecodePlan, into: Uint8Array): Promise<Uint8Array> {
  const { piscina, failed } = await decodeThread();
  const { frameWidth, frameHeight, crop, channels } = plan;
  const outcome = await Promise.race([piscina.run({ kind: "decode", file, index, plan: { frameWidth, frameHeight, crop, channels }, into }), failed]);
  if (!outcome) throw new Error(`Frame ${index + 1} was not decoded.`);
  if ("failed" in outcome) {
    const { code, message, frameIndex } = outcome.failed;
    throw new TrackingError(code, message, frameIndex === null ? undefined : { frameIndex });
  }
  return into.subarray(0, outcome.length);
}

/** Starts the decoding thread ahead of a stack's first frame (its bundle and sharp loaded). */
export async function startDecodeThread(): Promise<void> {
  const { piscina, failed } = await decodeThread();
  await Promise.race([piscina.run({ kind: "warm-up" }), failed]);
}

/** Stops the decoding thread; the next decode starts a new one. */
export async function closeDecodeThread(): Promise<void> {
  const closing = thread;
  thread = null;
  if (closing) await closing.piscina.destroy();
}

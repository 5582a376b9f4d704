/**
 * The tracking job's pool of worker threads (piscina): one fewer than the cores, one of them kept
 * for the life of the process and readied when the server starts taking tracking jobs, the others
 * started by a job; a worker that dies outside a task fails the tasks under way.
 */
import { existsSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import Piscina from "piscina";
import type { TrackTask, TrackTaskResult } from "./track-worker";
import type { PracticeResult } from "./worker-practice";
import { bundledWorker } from "./worker-bundle";
import { workerExecArgv } from "./worker-options";

/** The machine's cores: the pool's size and the decoders' share follow from it. */
export const cores = Math.max(1, os.availableParallelism());
/**
 * Worker threads: one fewer than the cores (at least one). Decoding, on libvips's threads, is most
 * of a job's work; the detector needs a fraction of a core, and every further thread loads OpenCV
 * and compiles the detector again (one thread instead of two saved about 0.25 s of processor time
 * per 600-frame job on a 2-core machine, Decision 68).
 */
export const trackingThreads = Math.max(1, cores - 1);
export const threads = trackingThreads;

export interface TrackingPool {
  piscina: Piscina<TrackTask, TrackTaskResult>;
  /** Set when a worker dies outside a task (it would not load, or ran out of memory): later tasks reject with it. */
  failure: Error | null;
  /**
   * The rejecters of the tasks under way, each removed when its task settles. Racing every task
   * against one promise that only a dead worker settles kept a reaction, and through it the task's
   * result, for every task the pool ever ran (tracking-pool.test.ts measures it).
   */
  pending: Set<(error: Error) => void>;
}

let pool: TrackingPool | null = null;

/**
 * The worker is bundled from its TypeScript source at the first job (worker-bundle.ts), so it runs
 * the same library code as the routes and the command line. A bundled server has no copy beside
 * it: fall back to the source tree under the working directory. The name sits in a variable so
 * that the bundler does not take `new URL(…, import.meta.url)` for an asset and copy the file away
 * from its imports.
 */
const workerName = "track-worker.ts";

function workerFile(): string {
  const beside = path.join(path.dirname(fileURLToPath(import.meta.url)), workerName);
  if (existsSync(beside)) return beside;
  const inSource = path.resolve(process.cwd(), "app/.server/tracking", workerName);
  if (existsSync(inSource)) return inSource;
  throw new Error(`The tracking worker was not found at ${beside} or ${inSource}.`);
}

export async function trackingPool(): Promise<TrackingPool> {
  if (pool) return pool;
  const filename = await bundledWorker(workerFile());
  // Another job may have made the pool while the bundle was being made.
  if (pool) return pool;
  const piscina = new Piscina<TrackTask, TrackTaskResult>({
    filename,
    // One thread is kept for the life of the process (readyTrackingPool readies it at the server's
    // start); any further ones give back their OpenCV heaps after a minute idle, and a job that
    // needs them again pays some 0.5 s of processor time apiece to reload.
    minThreads: 1,
    maxThreads: threads,
    idleTimeout: 60_000,
    execArgv: workerExecArgv(),
  });
  const made: TrackingPool = { piscina, failure: null, pending: new Set() };
  // Piscina reports a worker that fails to load only here, and its tasks would wait forever.
  piscina.on("error", (error: unknown) => {
    if (pool === made) pool = null;
    const reason = error instanceof Error ? error.message : String(error);
    failPool(made, new Error(`The tracking workers stopped: ${reason}`));
    piscina.destroy().catch(() => {});
  });
  pool = made;
  return made;
}

/** A number per background array, the same for the same array (track-worker.ts keeps one view of it). */
const backgroundIds = new WeakMap<Uint8Array, number>();
let nextBackgroundId = 1;

export function backgroundId(background: Uint8Array | null): number | undefined {
  if (!background) return undefined;
  let id = backgroundIds.get(background);
  if (id === undefined) {
    id = nextBackgroundId++;
    backgroundIds.set(background, id);
  }
  return id;
}

/** [from, to) ranges splitting `total` items between the pool's threads; a range is empty where there are fewer items than threads. */
export function threadShares(total: number): { from: number; to: number }[] {
  const share = Math.ceil(total / threads);
  return Array.from({ length: threads }, (_, w) => ({ from: Math.min(total, w * share), to: Math.min(total, (w + 1) * share) }));
}

export function runTask(workers: TrackingPool, task: TrackTask, transferList?: ArrayBuffer[]): Promise<TrackTaskResult> {
  if (workers.failure) return Promise.reject(workers.failure);
  return new Promise<TrackTaskResult>((resolve, reject) => {
    workers.pending.add(reject);
    workers.piscina.run(task, { transferList }).then(
      (result) => {
        workers.pending.delete(reject);
        resolve(result);
      },
      (error: unknown) => {
        workers.pending.delete(reject);
        reject(error instanceof Error ? error : new Error(String(error)));
      },
    );
  });
}

/** Rejects every task under way, and every later one, with `error`. */
export function failPool(workers: TrackingPool, error: Error): void {
  workers.failure ??= error;
  for (const reject of workers.pending) reject(workers.failure);
  workers.pending.clear();
}

/** Every worker of the pool started (each counts itself in and waits for the others). */
export async function startWorkers(workers: TrackingPool): Promise<void> {
  const arrived = new Int32Array(new SharedArrayBuffer(4));
  await Promise.all(Array.from({ length: threads }, () => runTask(workers, { kind: "warm-up", arrived, expected: threads })));
}

/**
 * Starts every tracking worker ahead of a job: loading one (its bundle, OpenCV) costs about 0.5 s of
 * processor time, which a job would otherwise spend before its first frame. The first is kept for
 * the life of the process, the others for a minute idle.
 */
export async function warmTrackingPool(): Promise<void> {
  await startWorkers(await trackingPool());
}

/** The practice of the pool made last (the thread it keeps for the life of the process). */
let readied: { pool: TrackingPool; practice: Promise<PracticeResult> } | null = null;

/**
 * Readies the thread the pool keeps for the life of the process, as a server does when it starts
 * taking tracking jobs: started, OpenCV loaded, and the detector practised on small rendered frames
 * (worker-practice.ts), so that a job does not pay for any of it (about 1 s of processor time on a
 * 2-core machine, Decision 103). Once per pool; a pool made again after its threads died is not
 * practised again.
 */
export async function readyTrackingPool(): Promise<PracticeResult> {
  const workers = await trackingPool();
  if (readied?.pool !== workers) readied = { pool: workers, practice: runTask(workers, { kind: "practise" }) as Promise<PracticeResult> };
  return readied.practice;
}

/** `readyTrackingPool` without waiting for it, saying in the log how it went: what a server does as it starts taking tracking jobs. */
export function readyTrackingInBackground(): void {
  const started = performance.now();
  readyTrackingPool().then(
    (practice) =>
      console.log(
        `[tracking] a tracking thread is ready: OpenCV loaded and the detector practised (the tracer found in ${practice.found} of ${practice.searched} rendered frames) in ${((performance.now() - started) / 1000).toFixed(1)} s`,
      ),
    (error: unknown) => {
      // A server stopped while the thread was being readied says nothing of it.
      if (pool)
        console.error(
          `[tracking] the tracking thread was not readied (the first job will start it): ${error instanceof Error ? error.message : String(error)}`,
        );
    },
  );
}

/** Stops the worker threads, so a server or a test can exit. The next job starts a new pool. */
export async function closeTrackingPool(): Promise<void> {
  const closing = pool;
  pool = null;
  if (closing) await closing.piscina.destroy();
}

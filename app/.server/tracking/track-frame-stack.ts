/**
 * The tracking job's computation: decode each frame (sharp, on libuv threads), find the tracer
 * in a pool of worker threads (one fewer than the cores), link detections into tracks, measure quality.
 * Frames stream through a bounded window, so memory does not grow with the stack.
 */
import { existsSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import Piscina from "piscina";
import { backgroundSampleIndices, fillChannelsFromSurroundings, minimumFreeSamples, tracerExclusions, type ExclusionSet } from "../../lib/tracking/background";
import type { DiscFit } from "../../lib/tracking/disc-fit";
import { defaultLinking, linkDetections, type LinkingOptions } from "../../lib/tracking/link";
import { extendTracks, withExtension, type DiscRequest } from "../../lib/tracking/track-extension";
import { planDetection, planKey, ViewSetupError, type DetectionPlan } from "../../lib/tracking/plan";
import { trackingQuality } from "../../lib/tracking/quality";
import { lastWholeFrame, searchedWhole, searchWindows } from "../../lib/tracking/search-windows";
import type { SearchWindow } from "../../lib/tracking/threshold";
import { discPixels } from "../../lib/tracking/turning-geometry";
import { ringMedians, samplesMisfit, turningPixels, turnExclusions, type TurningBackground } from "../../lib/tracking/turning-background";
import type { Detection, FrameDetections, Track, TrackingQuality, TrackingSetup } from "../../lib/tracking/types";
import { decodeFrame, readFrameSize, type FrameSize } from "./decode-frame";
import { TrackingError } from "./errors";
import { bundledWorker } from "./worker-bundle";
import { workerExecArgv } from "./worker-options";
import type { TiltedTurning, TrackTask, TrackTaskResult } from "./track-worker";

export interface TrackFrameStackInput {
  /** Frame files in stack order. */
  files: string[];
  /** Time of each frame, s. */
  times: number[];
  setup: TrackingSetup;
  /** Called as frames finish, at most every 200 ms and once at the end. */
  onProgress?: (framesDone: number, total: number) => void;
  /** Called once per newly searched frame, in completion order, so a job can keep what is done. */
  onFrameDetections?: (frame: FrameDetections) => void;
  signal?: AbortSignal;
  /** First frame to search when resuming; frames before it come from `priorDetections`. */
  startAt?: number;
  priorDetections?: FrameDetections[];
  linking?: Partial<LinkingOptions>;
}

export interface TrackFrameStackResult {
  frames: number;
  width: number;
  height: number;
  detections: FrameDetections[];
  tracks: Track[];
  quality: TrackingQuality;
  /** The region searched and the block size used, for the record. */
  search: { crop: DetectionPlan["crop"]; shrink: number };
}

const cores = Math.max(1, os.availableParallelism());
/**
 * Worker threads: one fewer than the cores (at least one). Decoding, on libvips's threads, is most
 * of a job's work; the detector needs a fraction of a core, and every further thread loads OpenCV
 * and compiles the detector again (one thread instead of two saved about 0.25 s of processor time
 * per 600-frame job on a 2-core machine, Decision 68).
 */
export const trackingThreads = Math.max(1, cores - 1);
const threads = trackingThreads;
/** Frames decoded or being searched at once: enough to keep every worker busy while sharp decodes. */
const inFlightLimit = cores * 3;
/**
 * A frame's search windows come from the frames this far before it (search-windows.ts): as many
 * as are in flight at once, so they are nearly always done by the time it is decoded.
 */
const windowLag = inFlightLimit;
const progressIntervalMs = 200;
/** How far from its foreseen place a float's fitted disc may lie, px (track-extension.ts). */
const extensionReachPx = 4;

interface TrackingPool {
  piscina: Piscina<TrackTask, TrackTaskResult>;
  /** Rejects when a worker dies outside a task (it would not load, or ran out of memory). */
  failed: Promise<never>;
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

async function trackingPool(): Promise<TrackingPool> {
  if (pool) return pool;
  const filename = await bundledWorker(workerFile());
  // Another job may have made the pool while the bundle was being made.
  if (pool) return pool;
  const piscina = new Piscina<TrackTask, TrackTaskResult>({
    filename,
    minThreads: 0,
    maxThreads: threads,
    // Idle workers give back their OpenCV heaps after a while; a new job pays ~0.5 s to reload.
    idleTimeout: 60_000,
    execArgv: workerExecArgv(),
  });
  let reject: (error: Error) => void = () => {};
  const failed = new Promise<never>((_, r) => {
    reject = r;
  });
  failed.catch(() => {});
  // Piscina reports a worker that fails to load only here, and its tasks would wait forever.
  piscina.on("error", (error: unknown) => {
    if (pool?.piscina === piscina) pool = null;
    const reason = error instanceof Error ? error.message : String(error);
    reject(new Error(`The tracking workers stopped: ${reason}`));
    piscina.destroy().catch(() => {});
  });
  const made: TrackingPool = { piscina, failed };
  pool = made;
  return made;
}

/** A number per background array, the same for the same array (track-worker.ts keeps one view of it). */
const backgroundIds = new WeakMap<Uint8Array, number>();
let nextBackgroundId = 1;

function backgroundId(background: Uint8Array | null): number | undefined {
  if (!background) return undefined;
  let id = backgroundIds.get(background);
  if (id === undefined) {
    id = nextBackgroundId++;
    backgroundIds.set(background, id);
  }
  return id;
}

function runTask(workers: TrackingPool, task: TrackTask, transferList?: ArrayBuffer[]): Promise<TrackTaskResult> {
  return Promise.race([workers.piscina.run(task, { transferList }), workers.failed]);
}

/** Every worker of the pool started (each counts itself in and waits for the others). */
async function startWorkers(workers: TrackingPool): Promise<void> {
  const arrived = new Int32Array(new SharedArrayBuffer(4));
  await Promise.all(Array.from({ length: threads }, () => runTask(workers, { kind: "warm-up", arrived, expected: threads })));
}

/**
 * Starts the tracking workers ahead of a job: loading one (its bundle, OpenCV) costs about 0.8 s of
 * processor time, which a job would otherwise spend before its first frame. Kept for the pool's
 * idle time (a minute).
 */
export async function warmTrackingPool(): Promise<void> {
  await startWorkers(await trackingPool());
}

/** Stops the worker threads, so a server or a test can exit. The next job starts a new pool. */
export async function closeTrackingPool(): Promise<void> {
  const closing = pool;
  pool = null;
  if (closing) await closing.piscina.destroy();
}

function cancelled(): TrackingError {
  return new TrackingError("cancelled", "The tracking job was cancelled.");
}

function searchFailed(index: number, error: unknown): TrackingError {
  const reason = error instanceof Error ? error.message : String(error);
  return new TrackingError("unreadable-frame", `Frame ${index + 1} could not be searched: ${reason}`, {
    frameIndex: index,
    cause: error,
  });
}

function validate(input: TrackFrameStackInput): void {
  const { files, times } = input;
  if (files.length === 0) throw new TrackingError("no-frames", "The run has no frames to track: upload the frame stack first.");
  if (times.length !== files.length) {
    throw new TrackingError("bad-input", `There are ${files.length} frames but ${times.length} frame times.`);
  }
  for (let i = 0; i < times.length; i++) {
    if (!Number.isFinite(times[i]) || (i > 0 && times[i]! <= times[i - 1]!)) {
      throw new TrackingError("bad-input", `The time of frame ${i + 1} is not after the time of the frame before it.`, {
        frameIndex: i,
      });
    }
  }
  const startAt = input.startAt ?? 0;
  if (!Number.isInteger(startAt) || startAt < 0 || startAt > files.length) {
    throw new TrackingError("bad-input", `A job cannot resume at frame ${startAt + 1} of ${files.length}.`);
  }
}

function makePlan(setup: TrackingSetup, width: number, height: number): DetectionPlan {
  try {
    return planDetection(setup, width, height);
  } catch (error) {
    if (error instanceof ViewSetupError) throw new TrackingError("bad-setup", error.message, { cause: error });
    throw error;
  }
}

/**
 * The still background of a stack (lib/tracking/background.ts), the tracer left out of it. Samples
 * and results live in shared memory: the workers split the pixels between them, and every
 * frame's task then reads the same background without a copy.
 *
 * The median of frames sampled over the stack (each channel's for dye), the tracer found in each
 * sample against it, then the median again with a disc around each float, or the ellipse each
 * dye patch covers, left out.
 */
async function stillBackground(
  files: string[],
  plan: DetectionPlan,
  key: string,
  workers: TrackingPool,
  signal: AbortSignal | undefined,
  frameTime: ((index: number) => number) | undefined,
): Promise<{ still: Uint8Array; turning: TurningBackground | null; samples: Uint8Array; indices: number[] }> {
  if (files.length < 3) {
    throw new TrackingError("bad-input", "Tracking a float needs at least 3 frames: the still background is their median.");
  }
  const channels = plan.channels;
  const indices = backgroundSampleIndices(files.length);
  const pixels = plan.crop.width * plan.crop.height;
  const length = pixels * channels;
  const samples = new Uint8Array(new SharedArrayBuffer(indices.length * length));
  let next = 0;
  await Promise.all(
    Array.from({ length: cores * 2 }, async () => {
      while (next < indices.length) {
        if (signal?.aborted) throw cancelled();
        const j = next++;
        samples.set(await decodeFrame(files[indices[j]!]!, indices[j]!, plan), j * length);
      }
    }),
  );
  const median = async (exclusions?: ExclusionSet, plain?: Uint8Array, from: Uint8Array = samples): Promise<Uint8Array> => {
    const out = new Uint8Array(new SharedArrayBuffer(length));
    const used = exclusions ? new Uint8Array(new SharedArrayBuffer(pixels)) : undefined;
    const strip = Math.ceil(pixels / threads);
    await Promise.all(
      Array.from({ length: threads }, (_, w) =>
        runTask(workers, {
          kind: "background",
          samples: from,
          count: indices.length,
          out,
          from: Math.min(pixels, w * strip),
          to: Math.min(pixels, (w + 1) * strip),
          exclusions,
          used,
          channels,
          plain,
        }),
      ),
    );
    if (used) fillChannelsFromSurroundings(out, used, plan.crop.width, channels, minimumFreeSamples(indices.length));
    return out;
  };
  const findIn = (background: Uint8Array): Promise<Detection[][]> =>
    Promise.all(
      indices.map(async (index, j) => {
        // A copy of its own (slice of shared memory is not shared), handed over to the worker.
        const image = samples.slice(j * length, (j + 1) * length);
        try {
          return (await runTask(workers, { kind: "detect", plan, planKey: key, image, background, backgroundId: backgroundId(background) }, [
            image.buffer,
          ])) as Detection[];
        } catch (error) {
          throw searchFailed(index, error);
        }
      }),
    );
  const plain = await median();
  if (signal?.aborted) throw cancelled();
  const discs = tracerExclusions(await findIn(plain), plan.crop, plan.shrink);
  if (signal?.aborted) throw cancelled();
  const still = discs.length === 0 ? plain : await median({ width: plan.crop.width, discs }, plain);
  if (!plan.turn || !frameTime) return { still, turning: null, samples, indices };
  const angles = indices.map((index) => plan.turn!.rate * frameTime(index));
  const turning = await turningModel(plan, workers, samples, indices.length, still, discs, angles, median);
  return { still, turning, samples, indices };
}

/**
 * The second model of a stack whose view has a turning part (lib/tracking/turning-background.ts):
 * where the still model misfits the samples, the samples turned back into the turning frame and
 * their median there, the tracer left out as in the still model. Null where nothing turns
 * through the view (every pixel's misfit is like the rest), so such a stack costs one pass more.
 */
/** Whether anything turns is judged on every fourth row and column: a sixteenth of the pass. */
const misfitStride = 4;
/**
 * A tilted view's turning centre found this close to the marked one (px) is taken for it: the
 * camera is straight down for what turns, and Decision 70's model serves (Decision 76).
 */
const sameCentrePx = 1;
/** The share of the still model's misfit the two models together must stay below to be used. */
const keptMisfitShare = 0.5;

async function turningModel(
  plan: DetectionPlan,
  workers: TrackingPool,
  samples: Uint8Array,
  count: number,
  still: Uint8Array,
  discs: ReturnType<typeof tracerExclusions>,
  angles: number[],
  median: (exclusions?: ExclusionSet, plain?: Uint8Array, from?: Uint8Array) => Promise<Uint8Array>,
): Promise<TurningBackground | null> {
  let turn = plan.turn!;
  const width = plan.crop.width;
  const pixels = width * plan.crop.height;
  const misfit = new Float32Array(new SharedArrayBuffer(pixels * 4));
  const strip = Math.ceil(pixels / threads);
  await Promise.all(
    Array.from({ length: threads }, (_, w) =>
      runTask(workers, {
        kind: "misfit",
        samples,
        count,
        model: still,
        width,
        discs,
        out: misfit,
        stride: misfitStride,
        from: Math.min(pixels, w * strip),
        to: Math.min(pixels, (w + 1) * strip),
      }),
    ),
  );
  let inDisc = turningPixels(misfit, width, turn, misfitStride);
  if (!inDisc) return null;
  const frames = Array.from({ length: count }, (_, j) => samples.subarray(j * pixels, (j + 1) * pixels));
  let turning: Uint8Array;
  let factor: Float32Array | null = null;
  if (turn.rectify) {
    // A tilted view: what turns does so about its own centre (turning-centre.ts, Decision 76), and
    // its model is a factor on the still model's darkness (turning-median.ts), made in a worker.
    const tilted = (await runTask(workers, {
      kind: "tilted-turning",
      samples,
      count,
      still,
      width,
      height: plan.crop.height,
      turn,
      angles,
      discs,
      sameCentrePx,
    })) as TiltedTurning;
    if (tilted.turn && tilted.factor) {
      turn = tilted.turn;
      factor = new Float32Array(new SharedArrayBuffer(tilted.factor.length * 4));
      factor.set(tilted.factor);
    } else {
      // About the marked centre after all (a camera nearly straight down): Decision 70's model in the image.
      turn = { cx: turn.cx, cy: turn.cy, r: turn.r - 1, rate: turn.rate };
    }
    inDisc = discPixels(turn, width, plan.crop.height);
  }
  if (factor) {
    turning = still;
  } else {
    const turned = new Uint8Array(new SharedArrayBuffer(samples.length));
    const share = Math.ceil(count / threads);
    const turnedPlan = { ...plan, turn };
    await Promise.all(
      Array.from({ length: threads }, (_, w) =>
        runTask(workers, {
          kind: "turn-back",
          samples,
          plan: turnedPlan,
          angles,
          out: turned,
          from: Math.min(count, w * share),
          to: Math.min(count, (w + 1) * share),
        }),
      ),
    );
    const turnedDiscs = turnExclusions(discs, turn, angles);
    turning = await median(turnedDiscs.length ? { width, discs: turnedDiscs } : undefined, undefined, turned);
  }
  const shared = new Int32Array(new SharedArrayBuffer(inDisc.length * 4));
  shared.set(inDisc);
  const model: TurningBackground = { turn, turning, rings: factor ? new Float32Array(0) : ringMedians(turning, width, turn), pixels: shared, factor };
  const misfits = samplesMisfit(frames, still, model, width, plan.crop.height, angles);
  // Kept only where it explains the samples clearly better than the still model alone.
  return misfits.combined < keptMisfitShare * misfits.still ? model : null;
}

function copyInto(slot: Uint8Array, crop: Uint8Array): Uint8Array {
  slot.set(crop);
  return slot;
}

function defaultStep(plan: DetectionPlan): number {
  const size = plan.tank ? plan.tank.r : Math.min(plan.frameWidth, plan.frameHeight) / 2;
  return Math.max(10, 0.1 * size);
}

/**
 * What searching frames of one stack needs, made once: the plan, the worker pool and the still
 * background of the stack's sampled frames. `files` is the stack in order; only the frames
 * `backgroundSampleIndices(files.length)` names are read (the streaming tracker passes the
 * stack's length with just those filled in, app/.server/jobs/frame-stream.ts).
 */
export interface StackSearch {
  plan: DetectionPlan;
  width: number;
  height: number;
  /**
   * The tracer in one frame of the stack (decoded from `file`, searched against the background):
   * in `windows` when they settle to some (search-windows.ts), else over the whole frame.
   */
  detect(file: string, index: number, windows?: Promise<SearchWindow[] | null>): Promise<Detection[]>;
  /** A float's disc fitted in one frame near a place (full-frame px, track-extension.ts); null for dye. */
  fitDisc(file: string, index: number, request: DiscRequest): Promise<DiscFit | null>;
}

/**
 * `frameTime` gives a frame's time (s) by its index: a view with a turning part (the setup's
 * rotation) needs it to turn the background's second model; without it the still model is used alone.
 * `filesFixed` says that `files` will not change while the stack is searched (one job's pass):
 * then a frame sampled for the background is searched from the crop decoded for it, not decoded
 * again. Frames that arrive one by one may be replaced after the background was made, so the
 * streaming tracker does not say so.
 */
export async function prepareStackSearch(
  files: string[],
  setup: TrackingSetup,
  size: FrameSize,
  signal?: AbortSignal,
  frameTime?: (index: number) => number,
  filesFixed = false,
): Promise<StackSearch> {
  const { width, height } = size;
  const plan = makePlan(setup, width, height);
  const key = planKey(plan);
  const workers = await trackingPool();
  const warmUp = startWorkers(workers);
  warmUp.catch(() => {});
  let background: Uint8Array | null;
  let turning: TurningBackground | null = null;
  /** Where each sampled frame's crop sits in `sampled`, by frame index (only when `filesFixed`). */
  const sampleAt = new Map<number, number>();
  let sampled: Uint8Array | null = null;
  try {
    // Dye without enough frames for a median is found by its colour alone.
    if (plan.tracer === "dye" && files.length < 3) {
      background = null;
    } else {
      const made = await stillBackground(files, plan, key, workers, signal, frameTime);
      ({ still: background, turning } = made);
      if (filesFixed) {
        sampled = made.samples;
        made.indices.forEach((index, j) => sampleAt.set(index, j));
      }
    }
  } finally {
    await warmUp;
  }
  // Frames reach the workers through slots of shared memory, reused: a new transferred buffer
  // per frame made the thread's heap take in and collect 0.45–1.35 MB of outside memory a frame.
  // At most the in-flight count of slots is ever made (Decision 68).
  const frameBytes = plan.crop.width * plan.crop.height * plan.channels;
  const freeSlots: Uint8Array[] = [];
  const turnedAt = (index: number) => (turning && frameTime ? { model: turning, angle: turning.turn.rate * frameTime(index) } : null);
  return {
    plan,
    width,
    height,
    async fitDisc(file, index, request) {
      if (plan.tracer !== "float" || !background) return null;
      const image = await decodeFrame(file, index, plan);
      if (signal?.aborted) throw cancelled();
      const { left, top } = plan.crop;
      const inCrop = { ...request, x: request.x - left, y: request.y - top };
      try {
        const fit = (await runTask(workers, { kind: "fit-disc", plan, image, background, turning: turnedAt(index), request: inCrop })) as DiscFit | null;
        return fit && { ...fit, x: fit.x + left, y: fit.y + top };
      } catch (error) {
        throw searchFailed(index, error);
      }
    },
    async detect(file: string, index: number, windows?: Promise<SearchWindow[] | null>) {
      const slot = freeSlots.pop() ?? new Uint8Array(new SharedArrayBuffer(frameBytes));
      try {
        // Decoded while the earlier frames that place the windows are still being searched.
        const j = sampleAt.get(index);
        const image =
          sampled && j !== undefined ? copyInto(slot, sampled.subarray(j * frameBytes, (j + 1) * frameBytes)) : await decodeFrame(file, index, plan, slot);
        const inWindows = (await windows) ?? null;
        if (signal?.aborted) throw cancelled();
        try {
          return (await runTask(workers, {
            kind: "detect",
            plan,
            planKey: key,
            image,
            background,
            backgroundId: backgroundId(background),
            windows: inWindows,
            turning: turnedAt(index),
          })) as Detection[];
        } catch (error) {
          throw searchFailed(index, error);
        }
      } finally {
        freeSlots.push(slot);
      }
    },
  };
}

export async function trackFrameStack(input: TrackFrameStackInput): Promise<TrackFrameStackResult> {
  validate(input);
  const { files, times, setup, signal } = input;
  const total = files.length;
  const startAt = input.startAt ?? 0;
  if (signal?.aborted) throw cancelled();

  const byFrame = new Map<number, FrameDetections>();
  for (const prior of input.priorDetections ?? []) {
    // Frames before `startAt` (a resumed job) and any other frame already searched (streamed as it arrived).
    if (prior.frameIndex < total) byFrame.set(prior.frameIndex, prior);
  }
  const toSearch: number[] = [];
  for (let index = startAt; index < total; index++) if (!byFrame.has(index)) toSearch.push(index);
  const size = await readFrameSize(files[0]!, 0);
  // Every frame already searched: no background, no workers, straight to linking.
  const search = toSearch.length ? await prepareStackSearch(files, setup, size, signal, (index) => times[index]!, true) : null;
  const plan = search?.plan ?? makePlan(setup, size.width, size.height);
  const { width, height } = size;

  let done = total - toSearch.length;
  let lastProgress = 0;
  const progress = (force: boolean) => {
    const now = Date.now();
    if (input.onProgress && (force || now - lastProgress >= progressIntervalMs)) {
      lastProgress = now;
      input.onProgress(done, total);
    }
  };

  let failure: unknown = null;
  const linkGate = input.linking?.maxStepPx ?? defaultStep(plan);
  /** Settles when a frame searched in this pass is done (or has failed). */
  const searched = new Map<number, Promise<void>>();
  const found = async (index: number): Promise<readonly Detection[] | null> => {
    if (index < 0) return null;
    await searched.get(index);
    return byFrame.get(index)?.detections ?? null;
  };
  const windowsFor = async (index: number): Promise<SearchWindow[] | null> => {
    if (searchedWhole(index)) return null;
    const first = index - windowLag;
    const [latest, before, earlier, lastWhole] = await Promise.all([found(first), found(first - 1), found(first - 2), found(lastWholeFrame(first))]);
    return searchWindows({ recent: [latest, before, earlier], lastWhole, lag: windowLag, maxStepPx: linkGate });
  };
  const searchFrame = async (index: number): Promise<void> => {
    const detections = await search!.detect(files[index]!, index, windowsFor(index));
    if (failure || signal?.aborted) return;
    const frame: FrameDetections = { frameIndex: index, t: times[index]!, detections };
    byFrame.set(index, frame);
    done++;
    input.onFrameDetections?.(frame);
    progress(false);
  };

  const inFlight = new Set<Promise<void>>();
  for (const index of toSearch) {
    if (failure || signal?.aborted) break;
    const task: Promise<void> = searchFrame(index)
      .catch((error: unknown) => {
        failure ??= error;
      })
      .finally(() => inFlight.delete(task));
    inFlight.add(task);
    searched.set(index, task);
    while (inFlight.size >= inFlightLimit) await Promise.race(inFlight);
  }
  await Promise.all(inFlight);
  if (failure) throw failure;
  if (signal?.aborted) throw cancelled();
  progress(true);

  const detections: FrameDetections[] = [];
  for (let i = 0; i < total; i++) {
    detections.push(byFrame.get(i) ?? { frameIndex: i, t: times[i]!, detections: [] });
  }
  if (!detections.some((f) => f.detections.length > 0)) {
    throw new TrackingError("tracer-not-found", `The tracer was not found in any frame — check the tracer kind (${setup.tracer}) and the tank edge.`);
  }
  const linking: LinkingOptions = { maxStepPx: defaultStep(plan), ...defaultLinking, ...input.linking };
  let { tracks, shortTracksDropped } = linkDetections(detections, linking);
  if (plan.tracer === "float" && tracks.length > 0) {
    // Floats hidden in part by glare: the tracks carried on by fitting the float's disc (track-extension.ts).
    let fitter = search;
    const fit = async (index: number, request: DiscRequest) => {
      fitter ??= await prepareStackSearch(files, setup, size, signal, (i) => times[i]!, true);
      return fitter.fitDisc(files[index]!, index, request);
    };
    const extension = await extendTracks(tracks, fit, { frames: total, reachPx: extensionReachPx });
    if (extension.added.size > 0) {
      const extended = withExtension(detections, extension);
      detections.splice(0, detections.length, ...extended);
      ({ tracks, shortTracksDropped } = linkDetections(detections, linking));
    }
  }
  if (tracks.length === 0) {
    const seen = detections.filter((f) => f.detections.length > 0).length;
    throw new TrackingError(
      "no-tracks",
      `The tracer was found in ${seen} of ${total} frames, but never in ${linking.minTrackPoints} frames close enough together to make a track — check the frame times and that the tracer stays in view.`,
    );
  }
  return {
    frames: total,
    width,
    height,
    detections,
    tracks,
    quality: trackingQuality(total, detections, tracks, shortTracksDropped),
    search: { crop: plan.crop, shrink: plan.shrink },
  };
}

/**
 * The tracking job's computation: decode each frame (sharp, on libuv threads), find the tracer
 * in a pool of worker threads (one fewer than the cores), link detections into tracks, measure quality.
 * Frames stream through a bounded window, so memory does not grow with the stack.
 */
import type { DiscFit } from "../../lib/tracking/disc-fit";
import { defaultLinking, linkDetections, type LinkingOptions } from "../../lib/tracking/link";
import { extendTracks, piecesToExtend, withExtension, type DiscRequest } from "../../lib/tracking/track-extension";
import { planDetection, planKey, ViewSetupError, type DetectionPlan } from "../../lib/tracking/plan";
import { trackingQuality } from "../../lib/tracking/quality";
import { lastWholeFrame, searchedWhole, searchWindows } from "../../lib/tracking/search-windows";
import type { SearchWindow } from "../../lib/tracking/threshold";
import type { TurningBackground } from "../../lib/tracking/turning-background";
import type { Detection, FrameDetections, Track, TrackingQuality, TrackingSetup } from "../../lib/tracking/types";
import { decodeFrame, readFrameSize, type FrameSize } from "./decode-frame";
import { cancelled, searchFailed, TrackingError } from "./errors";
import { stillBackground } from "./stack-background";
import { backgroundId, cores, runTask, startWorkers, trackingPool } from "./tracking-pool";

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
  if (plan.tracer === "float") {
    // Floats hidden in part by glare: the pieces of their paths carried on by fitting the float's
    // disc (track-extension.ts), from pieces as short as the extension can start from and before
    // pieces are joined across gaps, so it works into a gap from both sides; the fitted
    // detections join the blobs' before the one linking below.
    const pieces = piecesToExtend(detections, linking);
    if (pieces.length > 0) {
      let fitter = search;
      const fit = async (index: number, request: DiscRequest) => {
        fitter ??= await prepareStackSearch(files, setup, size, signal, (i) => times[i]!, true);
        return fitter.fitDisc(files[index]!, index, request);
      };
      const extension = await extendTracks(pieces, fit, { frames: total, reachPx: extensionReachPx });
      if (extension.added.size > 0) detections.splice(0, detections.length, ...withExtension(detections, extension));
    }
  }
  const { tracks, shortTracksDropped } = linkDetections(detections, linking);
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

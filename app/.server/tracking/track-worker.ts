/**
 * Worker-thread entry of the tracking pool: takes a frame's crop (or the background samples),
 * calls the tracking library, hands the result back. No files, no database.
 */
import { createRequire } from "node:module";
import { medianInto, type ExclusionSet } from "../../lib/tracking/background";
import { medianOverRegion } from "../../lib/tracking/background-region";
import { createDetector, type Detector } from "../../lib/tracking/detect";
import type { OpenCv } from "../../lib/tracking/opencv-types";
import type { DetectionPlan } from "../../lib/tracking/plan";
import type { SearchWindow } from "../../lib/tracking/threshold";
import { meanSquareMisfit, turnBack, type TurningBackground } from "../../lib/tracking/turning-background";
import { backgroundAt, composeGeometry, samplesMisfit, type ComposeGeometry } from "../../lib/tracking/turning-compose";
import type { BackgroundExclusion } from "../../lib/tracking/background";
import type { Detection } from "../../lib/tracking/types";
import { fitDisc, type DiscFit } from "../../lib/tracking/disc-fit";
import type { DiscRequest } from "../../lib/tracking/track-extension";
import { recentredTurn } from "../../lib/tracking/turning-centre";
import type { TurnInView } from "../../lib/tracking/turning-geometry";
import { turningMedian } from "../../lib/tracking/turning-median";
import { practise, type PracticeResult } from "./worker-practice";

export type TrackTask =
  | {
      kind: "detect";
      plan: DetectionPlan;
      planKey: string;
      image: Uint8Array;
      background: Uint8Array | null;
      /**
       * Names the background array (the same number for the same array): it arrives as a new view
       * of its shared memory with every task, and the detector keeps sums of it for the array it
       * was last given (threshold.ts), so the worker hands it the first view it had of that array.
       */
      backgroundId?: number;
      /** Where to search first (search-windows.ts); the whole frame when absent. */
      windows?: SearchWindow[] | null;
      /** The turning model and the angle its part has reached at this frame (turning-background.ts). */
      turning?: { model: TurningBackground; angle: number } | null;
    }
  | {
      /** A float's disc fitted near a place in one frame (disc-fit.ts), the frame's background composed as for "detect". */
      kind: "fit-disc";
      plan: DetectionPlan;
      image: Uint8Array;
      background: Uint8Array;
      turning?: { model: TurningBackground; angle: number } | null;
      /** In crop px. */
      request: DiscRequest;
    }
  | {
      /** Samples [from, to) turned back into the turning frame, each by its angle (each of the plan's channels), into the shared `out`. */
      kind: "turn-back";
      samples: Uint8Array;
      plan: DetectionPlan;
      angles: number[];
      out: Uint8Array;
      from: number;
      to: number;
    }
  | {
      /**
       * A tilted view's turning part (Decision 76): its centre found from the samples' departures
       * from the still model, then its model, a factor on the still model's darkness. Seconds of
       * processor time a stack, so off the server's main thread. `turn` null: the centre was found
       * within `sameCentrePx` of the marked one.
       */
      kind: "tilted-turning";
      samples: Uint8Array;
      count: number;
      still: Uint8Array;
      width: number;
      height: number;
      turn: TurnInView;
      angles: number[];
      discs: BackgroundExclusion[];
      sameCentrePx: number;
    }
  | {
      /** Mean square misfit of the samples against `model` for pixels [from, to), into the shared `out`. */
      kind: "misfit";
      samples: Uint8Array;
      count: number;
      model: Uint8Array;
      width: number;
      discs: BackgroundExclusion[];
      out: Float32Array;
      /** Only pixels on every `stride`-th row and column. */
      stride: number;
      from: number;
      to: number;
      /** Interleaved channels per pixel (3 for dye); the misfit is their mean. */
      channels?: number;
    }
  | {
      /**
       * Mean square misfit of samples [from, to) against the still model alone and against the
       * still and turning models together (turning-background.ts `samplesMisfit`).
       */
      kind: "samples-misfit";
      samples: Uint8Array;
      count: number;
      still: Uint8Array;
      model: TurningBackground;
      width: number;
      height: number;
      angles: number[];
      from: number;
      to: number;
    }
  | {
      /** Median of the sampled frames for pixels [from, to), written into the shared `out`. */
      kind: "background";
      samples: Uint8Array;
      count: number;
      out: Uint8Array;
      from: number;
      to: number;
      /** Discs of sampled frames left out: where the float was found in them. */
      exclusions?: ExclusionSet;
      /** Shared, receives how many samples each pixel's median took. */
      used?: Uint8Array;
      /** Interleaved channels per pixel (3 for dye); `from` and `to` count pixels. */
      channels?: number;
      /** The plain median, already taken: pixels no disc covers copy it. */
      plain?: Uint8Array;
      /** Shared, per pixel: 1 where the median is made (background-region.ts); every pixel when absent. */
      region?: Uint8Array;
    }
  | {
      /** The detector run on small rendered frames, so that V8 compiles it before the first job (worker-practice.ts). */
      kind: "practise";
    }
  | {
      /** Each worker counts itself in and waits for the others, so that every worker is started. */
      kind: "warm-up";
      arrived: Int32Array;
      expected: number;
    };

export interface TiltedTurning {
  turn: TurnInView | null;
  factor: Float32Array | null;
}

/** Means over one share of the samples (a "samples-misfit" task). */
export interface MisfitMeans {
  still: number;
  combined: number;
}

export type TrackTaskResult = Detection[] | DiscFit | TiltedTurning | MisfitMeans | PracticeResult | null;

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const warmUpWaitMs = 5_000;

/**
 * Detectors keep their OpenCV matrices between frames of one plan. Two jobs may share the pool,
 * so a couple are kept; the oldest is freed when a third plan arrives.
 */
const detectors = new Map<string, Detector>();
const keptDetectors = 2;

function detectorFor(key: string, plan: DetectionPlan): Detector {
  let detector = detectors.get(key);
  if (detector) {
    detectors.delete(key);
  } else {
    detector = createDetector(cv, plan);
    if (detectors.size >= keptDetectors) {
      const [oldestKey, oldest] = detectors.entries().next().value as [string, Detector];
      oldest.dispose();
      detectors.delete(oldestKey);
    }
  }
  detectors.set(key, detector);
  return detector;
}

export default function runTrackTask(task: TrackTask): TrackTaskResult {
  // Loading a worker (tsx, OpenCV) takes about a second; a job starts them all while it decodes.
  if (task.kind === "warm-up") {
    Atomics.add(task.arrived, 0, 1);
    Atomics.notify(task.arrived, 0);
    const deadline = Date.now() + warmUpWaitMs;
    for (let seen = Atomics.load(task.arrived, 0); seen < task.expected && Date.now() < deadline;) {
      Atomics.wait(task.arrived, 0, seen, Math.max(1, deadline - Date.now()));
      seen = Atomics.load(task.arrived, 0);
    }
    return null;
  }
  if (task.kind === "practise") return practise(cv);
  if (task.kind === "background") {
    const length = task.out.length;
    const frames = Array.from({ length: task.count }, (_, j) => task.samples.subarray(j * length, (j + 1) * length));
    if (task.region) medianOverRegion(frames, task.out, task.from, task.to, task.region, task.exclusions, task.used, task.channels ?? 1, task.plain);
    else medianInto(frames, task.out, task.from, task.to, task.exclusions, task.used, task.channels ?? 1, task.plain);
    return null;
  }
  if (task.kind === "turn-back") {
    const { width, height } = task.plan.crop;
    const channels = task.plan.channels;
    const length = width * height * channels;
    const turn = task.plan.turn;
    if (!turn) throw new Error("This plan has no turning part.");
    for (let j = task.from; j < task.to; j++) {
      const out = task.out.subarray(j * length, (j + 1) * length);
      turnBack(task.samples.subarray(j * length, (j + 1) * length), width, height, turn, task.angles[j]!, out, channels);
    }
    return null;
  }
  if (task.kind === "tilted-turning") {
    const length = task.width * task.height;
    const frames = Array.from({ length: task.count }, (_, j) => task.samples.subarray(j * length, (j + 1) * length));
    const found = recentredTurn(frames, task.still, task.width, task.height, task.turn, task.angles);
    if (Math.hypot(found.cx - task.turn.cx, found.cy - task.turn.cy) <= task.sameCentrePx) return { turn: null, factor: null };
    return { turn: found, factor: turningMedian(frames, task.still, task.width, task.height, found, task.angles, task.discs) };
  }
  if (task.kind === "misfit") {
    const length = task.model.length;
    const frames = Array.from({ length: task.count }, (_, j) => task.samples.subarray(j * length, (j + 1) * length));
    meanSquareMisfit(frames, task.model, task.width, task.from, task.to, task.discs, task.out, task.stride, task.channels ?? 1);
    return null;
  }
  if (task.kind === "samples-misfit") {
    const length = task.still.length;
    const frames = Array.from({ length: task.to - task.from }, (_, j) => task.samples.subarray((task.from + j) * length, (task.from + j + 1) * length));
    return samplesMisfit(frames, task.still, task.model, task.width, task.height, task.angles.slice(task.from, task.to));
  }
  const { plan } = task;
  const { width, height } = plan.crop;
  let background = task.kind === "detect" ? sameBackground(task.background, task.backgroundId) : task.background;
  const still = background ?? undefined;
  if (task.turning && background) {
    // A float's background is rewritten in place frame by frame; a dye's must be a new array each
    // frame, since the dye detector keeps work per background array (threshold.ts), and is told
    // the still model its bottom's level is fitted to once (dye-patch-signal.ts).
    let frameBackground: Uint8Array;
    if (plan.tracer === "dye") {
      frameBackground = new Uint8Array(background.length);
    } else {
      if (composed?.length !== background.length) composed = new Uint8Array(background.length);
      frameBackground = composed;
    }
    backgroundAt(
      background,
      task.turning.model,
      task.image,
      width,
      height,
      task.turning.angle,
      frameBackground,
      geometryFor(background, task.turning.model, width, plan.channels),
    );
    background = frameBackground;
  }
  if (task.kind === "fit-disc") {
    const tank = plan.tank;
    return fitDisc({
      image: task.image,
      background: background!,
      width,
      height,
      ...task.request,
      inside: tank ? (col, row) => (col - tank.cx) ** 2 + (row - tank.cy) ** 2 <= tank.r * tank.r : undefined,
    });
  }
  const turned = task.turning && plan.tracer === "dye" ? still : undefined;
  return detectorFor(task.planKey, plan).detect({ data: task.image, width, height, channels: plan.channels }, background, task.windows ?? undefined, turned);
}

/**
 * The angle-free part of composing a frame's background (turning-compose.ts), kept for the still
 * background's view: a detect task's is the same array frame after frame (`sameBackground`), and
 * its turning model came with it. A tilted view's model (a factor) needs none.
 */
const geometries = new WeakMap<Uint8Array, ComposeGeometry>();

function geometryFor(still: Uint8Array, model: TurningBackground, width: number, channels: number): ComposeGeometry | undefined {
  if (model.factor) return undefined;
  let geometry = geometries.get(still);
  if (!geometry || geometry.cols.length !== model.pixels.length) {
    geometry = composeGeometry(model, width, channels);
    geometries.set(still, geometry);
  }
  return geometry;
}

/** The first view this worker had of each of the last few named backgrounds. */
const backgroundViews = new Map<number, Uint8Array>();
const keptBackgrounds = 2;

function sameBackground(background: Uint8Array | null, id: number | undefined): Uint8Array | null {
  if (!background || id === undefined) return background;
  const known = backgroundViews.get(id);
  if (known && known.length === background.length) return known;
  if (backgroundViews.size >= keptBackgrounds) backgroundViews.delete(backgroundViews.keys().next().value as number);
  backgroundViews.set(id, background);
  return background;
}

/**
 * This worker's float frame background where a turning model takes part, reused from frame to
 * frame. Not for dye: its detector keeps work per background array (threshold.ts,
 * dye-patch-signal.ts), which an array rewritten every frame would leave stale.
 */
let composed: Uint8Array | null = null;

/**
 * A stack's background models, made once before its frames are searched: the still background
 * (a median of sampled frames, the tracer left out) and, where part of the view turns, the turning
 * model (lib/tracking/turning-background.ts). The pixel work runs in the tracking pool's workers on
 * shared memory; this thread only hands it out and keeps what explains the samples.
 */
import { backgroundSampleIndices, tracerExclusions, type ExclusionSet } from "../../lib/tracking/background";
import { fillChannelsFromSurroundings, minimumFreeSamples } from "../../lib/tracking/background-fill";
import { regionBeyond, tankRegion, withExclusions } from "../../lib/tracking/background-region";
import type { DetectionPlan } from "../../lib/tracking/plan";
import { discPixels } from "../../lib/tracking/turning-geometry";
import { ringMedians, turningPixels, turnExclusions, type TurningBackground } from "../../lib/tracking/turning-background";
import type { Detection } from "../../lib/tracking/types";
import { decodeFrame } from "./decode-frame";
import { cancelled, searchFailed, TrackingError } from "./errors";
import type { MisfitMeans, TiltedTurning } from "./track-worker";
import { backgroundId, cores, runTask, threadShares, type TrackingPool } from "./tracking-pool";

/**
 * The still background of a stack (lib/tracking/background.ts), the tracer left out of it. Samples
 * and results live in shared memory: the workers split the pixels between them, and every
 * frame's task then reads the same background without a copy.
 *
 * The median of frames sampled over the stack (each channel's for dye), the tracer found in each
 * sample against it, then the median again with a disc around each float, or the ellipse each
 * dye patch covers, left out.
 */
export async function stillBackground(
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
  // A dye background is made only where it is read: inside the tank edge (background-region.ts),
  // widened where a tracer's exclusion reaches past it. A float's is made over the whole crop.
  const region = plan.tracer === "dye" ? tankRegion(plan.crop.width, plan.crop.height, plan.tank, plan.shrink + regionMarginPx) : null;
  const median = async (
    exclusions?: ExclusionSet,
    plain?: Uint8Array,
    from: Uint8Array = samples,
    over: Uint8Array | null = region,
    into?: Uint8Array,
  ): Promise<Uint8Array> => {
    const out = into ?? new Uint8Array(new SharedArrayBuffer(length));
    const used = exclusions ? new Uint8Array(new SharedArrayBuffer(pixels)) : undefined;
    await Promise.all(
      threadShares(pixels).map((range) =>
        runTask(workers, {
          kind: "background",
          samples: from,
          count: indices.length,
          out,
          ...range,
          exclusions,
          used,
          channels,
          plain,
          region: over ?? undefined,
        }),
      ),
    );
    if (used) fillChannelsFromSurroundings(out, used, plan.crop.width, channels, minimumFreeSamples(indices.length));
    return out;
  };
  /** The median with the tracers' exclusions left out; for dye, the plain median is first made where they and the fill round them reach past the tank edge. */
  const excluding = async (exclusions: ExclusionSet, plain: Uint8Array | undefined, from: Uint8Array = samples): Promise<Uint8Array> => {
    if (!region) return median(exclusions, plain, from);
    const wider = withExclusions(region, plan.crop.width, exclusions.discs, fillPadPx);
    if (plain && wider !== region) await median(undefined, undefined, from, regionBeyond(wider, region), plain);
    return median(exclusions, plain, from, wider);
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
  const still = discs.length === 0 ? plain : await excluding({ width: plan.crop.width, discs }, plain);
  if (!plan.turn || !frameTime) return { still, turning: null, samples, indices };
  const angles = indices.map((index) => plan.turn!.rate * frameTime(index));
  const turning = await turningModel(plan, workers, samples, indices.length, still, discs, angles, median, excluding);
  return { still, turning, samples, indices };
}

/** Beyond the detection block, what a reader takes past a pixel inside the tank edge (a bilinear read's neighbour, and one more). */
const regionMarginPx = 2;
/** Round each exclusion's box: the fill's neighbours and one more pixel. */
const fillPadPx = 2;

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
  excluding: (exclusions: ExclusionSet, plain: Uint8Array | undefined, from?: Uint8Array) => Promise<Uint8Array>,
): Promise<TurningBackground | null> {
  let turn = plan.turn!;
  const width = plan.crop.width;
  const pixels = width * plan.crop.height;
  const misfit = new Float32Array(new SharedArrayBuffer(pixels * 4));
  await Promise.all(
    threadShares(pixels).map((range) =>
      runTask(workers, {
        kind: "misfit",
        samples,
        count,
        model: still,
        width,
        discs,
        out: misfit,
        stride: misfitStride,
        channels: plan.channels,
        ...range,
      }),
    ),
  );
  let inDisc = turningPixels(misfit, width, turn, misfitStride);
  if (!inDisc) return null;
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
    const turnedPlan = { ...plan, turn };
    await Promise.all(
      threadShares(count).map((range) =>
        runTask(workers, {
          kind: "turn-back",
          samples,
          plan: turnedPlan,
          angles,
          out: turned,
          ...range,
        }),
      ),
    );
    const turnedDiscs = turnExclusions(discs, turn, angles);
    turning = turnedDiscs.length ? await excluding({ width, discs: turnedDiscs }, undefined, turned) : await median(undefined, undefined, turned);
  }
  const shared = new Int32Array(new SharedArrayBuffer(inDisc.length * 4));
  shared.set(inDisc);
  const rings = factor ? new Float32Array(0) : ringMedians(turning, width, turn, plan.channels);
  const model: TurningBackground = { turn, turning, rings, pixels: shared, factor };
  // The samples' misfit against both models, split by samples between the workers (up to 0.4 s of
  // processor time a stack, off the server's main thread): each gives its means over its share.
  const shares = threadShares(count).filter(({ from, to }) => from < to);
  const parts = await Promise.all(
    shares.map(
      ({ from, to }) =>
        runTask(workers, { kind: "samples-misfit", samples, count, still, model, width, height: plan.crop.height, angles, from, to }) as Promise<MisfitMeans>,
    ),
  );
  const misfits = { still: 0, combined: 0 };
  parts.forEach((part, i) => {
    const weight = (shares[i]!.to - shares[i]!.from) / count;
    misfits.still += weight * part.still;
    misfits.combined += weight * part.combined;
  });
  // Kept only where it explains the samples clearly better than the still model alone.
  return misfits.combined < keptMisfitShare * misfits.still ? model : null;
}

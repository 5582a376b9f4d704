/**
 * The light pass after tracking that reads the table's rate from the frames (lib/tracking's
 * rate-mark and rate-surroundings): each frame decoded to grey with sharp, one at a time, and fed
 * to the follower the view allows. It never fails the job: a rate it cannot read is a note.
 */
import sharp from "sharp";
import type { CameraMode } from "~/lib/analysis/frames";
import type { OmegaFromMark } from "~/lib/analysis/rate-from-footage";
import type { GreyImage } from "~/lib/tracking/grey-image";
import { createMarkFollower } from "~/lib/tracking/rate-mark";
import { createSurroundingsFollower } from "~/lib/tracking/rate-surroundings";
import type { TankEdge } from "~/lib/tracking/types";

export type RateMethod = "table mark" | "surroundings";

export interface RatePassInput {
  files: string[];
  times: number[];
  cameraMode: CameraMode;
  centre: { x: number; y: number };
  mirrored: boolean;
  tankEdge: TankEdge | null;
  rateMark: { x: number; y: number } | null;
  /** The set rate, signed rad/s: where the search starts. */
  omegaSet: number;
  signal?: AbortSignal;
}

/** The tracking job's columns for the rate read from the footage (migration 0013). */
export interface MeasuredRateColumns {
  measuredOmega: number | null;
  measuredOmegaSe: number | null;
  measuredOmegaMethod: RateMethod | null;
  measuredOmegaPoints: number | null;
  measuredOmegaNote: string | null;
}

/** More frames than this are thinned evenly: the rate's error is already far below what matters. */
const MAX_FRAMES = 600;

const noRate = (note: string, method: RateMethod | null = null): MeasuredRateColumns => ({
  measuredOmega: null,
  measuredOmegaSe: null,
  measuredOmegaMethod: method,
  measuredOmegaPoints: null,
  measuredOmegaNote: note,
});

/** One frame in grey, whole, as the followers read it. */
export async function greyFrame(file: string): Promise<GreyImage> {
  const { data, info } = await sharp(file, { failOn: "truncated" }).greyscale().raw({ depth: "uchar" }).toBuffer({ resolveWithObject: true });
  if (info.channels !== 1) throw new Error(`a frame decoded to ${info.channels} channels`);
  return { width: info.width, height: info.height, data: new Uint8Array(data) };
}

/** The rim's outer radius about the rotation centre, with a margin for the rim itself. */
export function beyondTankEdge(centre: { x: number; y: number }, edge: TankEdge): number {
  return Math.hypot(edge.cx - centre.x, edge.cy - centre.y) + edge.r * 1.06 + 3;
}

/** The follower the view allows, fed frames in stack order; or why the rate is not read at all. */
export interface RateFollowing {
  method: RateMethod;
  follower: { add(t: number, image: GreyImage): void; gaveUp?: () => string | null; result(): OmegaFromMark };
}

export type RateSettings = Omit<RatePassInput, "files" | "times" | "signal">;

export function startRateFollowing(input: RateSettings): RateFollowing | MeasuredRateColumns {
  if (!Number.isFinite(input.omegaSet) || input.omegaSet === 0) return noRate("The set rate is zero or missing: there is no turning to read.");
  if (input.cameraMode === "lab") {
    if (!input.rateMark) return noRate("No mark on the table was marked in the view setup, so the rate was not read from the frames.");
    return {
      method: "table mark",
      follower: createMarkFollower({ centre: input.centre, mark: input.rateMark, mirrored: input.mirrored, omegaSet: input.omegaSet }),
    };
  }
  if (!input.tankEdge) return noRate("The tank edge is not marked in the view setup, so the surroundings outside it could not be found.");
  return {
    method: "surroundings",
    follower: createSurroundingsFollower({
      centre: input.centre,
      innerRadiusPx: beyondTankEdge(input.centre, input.tankEdge),
      mirrored: input.mirrored,
      omegaSet: input.omegaSet,
    }),
  };
}

/** Every `rateStep(n)`-th frame of a stack of n is read. */
export function rateStep(frames: number): number {
  return Math.max(1, Math.ceil(frames / MAX_FRAMES));
}

export const rateNotRead = (error: unknown, method: RateMethod) =>
  noRate(`The frames could not be read for the rate (${error instanceof Error ? error.message : String(error)}).`, method);

/** The columns for what a follower found once it has had its frames. */
export function rateResult(following: RateFollowing): MeasuredRateColumns {
  const result = following.follower.result();
  if (result.omega === null || result.stdError === null) return noRate(result.reason ?? "The rate could not be read from the frames.", following.method);
  return {
    measuredOmega: result.omega,
    measuredOmegaSe: result.stdError,
    measuredOmegaMethod: following.method,
    measuredOmegaPoints: result.nPoints,
    measuredOmegaNote: null,
  };
}

export async function measureRateFromFrames(input: RatePassInput): Promise<MeasuredRateColumns> {
  const following = startRateFollowing(input);
  if (!("follower" in following)) return following;
  const step = rateStep(input.files.length);
  try {
    for (let i = 0; i < input.files.length; i += step) {
      if (input.signal?.aborted) return noRate("The reading of the rate was stopped.", following.method);
      following.follower.add(input.times[i]!, await greyFrame(input.files[i]!));
      // A view with no surroundings to follow says so at the first frame: the rest need not be read.
      if (following.follower.gaveUp?.()) break;
    }
  } catch (error) {
    return rateNotRead(error, following.method);
  }
  return rateResult(following);
}

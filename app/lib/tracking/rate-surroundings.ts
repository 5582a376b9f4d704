/**
 * The table's rate from a co-rotating camera: the lab-fixed surroundings outside the tank (the
 * room at the edge of the frame, fixed marks beyond the rim) turn past at −Ω. An annulus outside
 * the tank edge is resampled on a polar grid (rings 1 px apart, about 1 px of arc per angular
 * bin), each ring high-passed along the angle; every frame's profile is matched against the first
 * frame's at trial turns near the prediction (normalised cross-correlation, parabolic sub-bin
 * peak), and the turn against time is fitted by a straight line.
 */
import { rateFit, type OmegaFromMark } from "../analysis/rate-from-footage";
import { formatNumber } from "../number-format";
import { parabolicPeak, sampleBilinear, type GreyImage } from "./grey-image";

export interface SurroundingsOptions {
  centre: { x: number; y: number };
  /** Inner radius of the annulus, px: beyond the tank's rim. */
  innerRadiusPx: number;
  mirrored: boolean;
  /** The set rate, rad/s signed: the first prediction. */
  omegaSet: number;
  /** Least correlation that counts as a match. */
  minCorrelation?: number;
}

export interface SurroundingsFollower {
  add(t: number, image: GreyImage): void;
  /** Turn of the surroundings since the first frame, rad, as seen (positive: the table turned counterclockwise). */
  turns(): { t: number; angle: number; correlation: number }[];
  /** Why no later frame can help (the view shows no surroundings), once the first frame told; else null. */
  gaveUp(): string | null;
  result(): OmegaFromMark;
}

const MAX_RINGS = 24;

export function createSurroundingsFollower(options: SurroundingsOptions): SurroundingsFollower {
  const { centre, mirrored } = options;
  const sx = mirrored ? -1 : 1;
  const minCorrelation = options.minCorrelation ?? 0.5;
  let reference: Float32Array | null = null;
  let valid: Uint8Array | null = null;
  let bins = 0;
  let radii: number[] = [];
  let problem: string | null = null;
  const found: { t: number; angle: number; correlation: number }[] = [];

  const setUp = (image: GreyImage) => {
    const outer = Math.min(centre.x, centre.y, image.width - 1 - centre.x, image.height - 1 - centre.y) - 1;
    const inner = Math.max(1, options.innerRadiusPx);
    if (!(outer - inner >= 3)) {
      // `inner` is past the rim and wall, not the tank edge the view setup shows: say which is which.
      problem =
        `The tank fills the frame across its narrower side, so the rate cannot be read from the room beyond it: ` +
        `a full ring of the surroundings would start ${formatNumber(inner, 3)} px from the centre (past the tank's rim and wall), ` +
        `but the nearest edge of the frame is ${formatNumber(Math.max(0, outer), 3)} px away. ` +
        `With a co-rotating camera, leave a band of the room showing all round the tank.`;
      return;
    }
    const step = Math.max(1, (outer - inner) / MAX_RINGS);
    radii = [];
    for (let r = inner; r <= outer; r += step) radii.push(r);
    bins = Math.max(360, Math.min(4096, Math.round(2 * Math.PI * outer)));
  };

  /** Polar profile at table angles 2πj/bins, each ring less its running mean over 1/16 turn. */
  const profile = (image: GreyImage): Float32Array => {
    const out = new Float32Array(radii.length * bins);
    const window = Math.max(3, Math.round(bins / 16));
    const ring = new Float64Array(bins);
    const prefix = new Float64Array(2 * bins + 1);
    radii.forEach((r, k) => {
      for (let j = 0; j < bins; j++) {
        const a = (2 * Math.PI * j) / bins;
        ring[j] = sampleBilinear(image, centre.x + sx * r * Math.cos(a), centre.y - r * Math.sin(a));
      }
      for (let j = 0; j < 2 * bins; j++) prefix[j + 1] = prefix[j]! + ring[j % bins]!;
      for (let j = 0; j < bins; j++) {
        const from = j - Math.floor(window / 2) + bins;
        const mean = (prefix[from + window]! - prefix[from]!) / window;
        out[k * bins + j] = ring[j]! - mean;
      }
    });
    return out;
  };

  /** Correlation of the frame's profile with the reference turned by `shift` bins, over bins seen in both. */
  const correlate = (current: Float32Array, shift: number): number => {
    if (!reference || !valid) return Number.NaN;
    let sa = 0;
    let sb = 0;
    let saa = 0;
    let sbb = 0;
    let sab = 0;
    let n = 0;
    const s = ((shift % bins) + bins) % bins;
    for (let k = 0; k < radii.length; k++) {
      const base = k * bins;
      for (let j = 0; j < bins; j++) {
        const a = current[base + j]!;
        const jj = j + s < bins ? j + s : j + s - bins;
        const b = reference[base + jj]!;
        if (Number.isNaN(a) || !valid[base + jj]) continue;
        sa += a;
        sb += b;
        saa += a * a;
        sbb += b * b;
        sab += a * b;
        n++;
      }
    }
    if (n < 0.25 * radii.length * bins) return Number.NaN;
    const cov = sab - (sa * sb) / n;
    const va = saa - (sa * sa) / n;
    const vb = sbb - (sb * sb) / n;
    return va > 0 && vb > 0 ? cov / Math.sqrt(va * vb) : Number.NaN;
  };

  return {
    add(t, image) {
      if (problem) return;
      if (!reference) {
        setUp(image);
        if (problem) return;
        reference = profile(image);
        valid = new Uint8Array(reference.length);
        for (let i = 0; i < reference.length; i++) valid[i] = Number.isNaN(reference[i]!) ? 0 : 1;
        found.push({ t, angle: 0, correlation: 1 });
        return;
      }
      const binWidth = (2 * Math.PI) / bins;
      const last = found[found.length - 1]!;
      const first = found[0]!;
      const omega = found.length >= 3 && Math.abs(last.angle) > 0.05 ? last.angle / (last.t - first.t) : options.omegaSet;
      const predicted = (last.angle + omega * (t - last.t)) / binWidth;
      // Room for a rate 10 % off the prediction over the gap since the last match, and a few bins.
      const reach = 3 + Math.ceil((0.1 * Math.abs(omega * (t - last.t))) / binWidth);
      const centreBin = Math.round(predicted);
      const current = profile(image);
      const scores: number[] = [];
      let best = -Infinity;
      let bestAt = -1;
      for (let i = 0; i <= 2 * reach; i++) {
        const c = correlate(current, centreBin - reach + i);
        scores.push(c);
        if (c > best) {
          best = c;
          bestAt = i;
        }
      }
      if (!(best >= minCorrelation) || bestAt <= 0 || bestAt >= 2 * reach) return;
      const offset = parabolicPeak(scores[bestAt - 1]!, best, scores[bestAt + 1]!);
      found.push({ t, angle: (centreBin - reach + bestAt + offset) * binWidth, correlation: best });
    },
    turns: () => found.slice(),
    gaveUp: () => problem,
    result() {
      const none = (reason: string): OmegaFromMark => ({ omega: null, stdError: null, turns: 0, nPoints: found.length, reason });
      if (problem) return none(problem);
      if (found.length < 5) return none(`The surroundings were matched in only ${found.length} frames: at least 5 are needed.`);
      const span = found[found.length - 1]!.angle - found[0]!.angle;
      if (Math.abs(span) < 0.05)
        return none(`The surroundings turn only ${formatNumber((Math.abs(span) * 180) / Math.PI, 2)}° over the frames: too little to measure the rate.`);
      const fit = rateFit(
        found.map((p) => p.t),
        found.map((p) => p.angle),
      );
      if (!fit) return none("The surroundings' turn wanders from frame to frame too much to give the rate an honest error.");
      return { omega: fit.slope, stdError: fit.stdError, turns: span / (2 * Math.PI), nPoints: found.length, reason: null };
    },
  };
}

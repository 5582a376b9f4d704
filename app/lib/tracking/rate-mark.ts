/**
 * A mark on the turntable followed through the frames of a lab-fixed camera: the technician marks
 * it once on the first frame; in each later frame the first frame's patch around it, turned by
 * the angle the table has turned, is matched (normalised cross-correlation) in a small window
 * around the position the last rate predicts, with a parabolic sub-pixel peak. The positions
 * then go to `measureOmegaFromMark`.
 */
import { measureOmegaFromMark, type OmegaFromMark } from "../analysis/rate-from-footage";
import { parabolicPeak, sampleBilinear, type GreyImage } from "./grey-image";

export interface MarkFollowerOptions {
  /** Rotation centre and the mark on the first frame, image px. */
  centre: { x: number; y: number };
  mark: { x: number; y: number };
  mirrored: boolean;
  /** The set rate, rad/s signed: the first prediction. */
  omegaSet: number;
  /** Half the side of the matched patch, px. */
  halfSizePx?: number;
  /** How far from the prediction the mark is looked for, px. */
  searchPx?: number;
  /** Least correlation that counts as a find. */
  minCorrelation?: number;
}

export interface MarkPoint {
  t: number;
  x: number;
  y: number;
  correlation: number;
}

export interface MarkFollower {
  add(t: number, image: GreyImage): void;
  points(): MarkPoint[];
  result(): OmegaFromMark;
}

export function createMarkFollower(options: MarkFollowerOptions): MarkFollower {
  const half = Math.max(3, Math.round(options.halfSizePx ?? 8));
  const search = Math.max(2, Math.round(options.searchPx ?? 6));
  const minCorrelation = options.minCorrelation ?? 0.6;
  const { centre, mirrored } = options;
  const sx = mirrored ? -1 : 1;
  // Table angle (seen from above, counterclockwise) of an image point about the centre.
  const angleOf = (p: { x: number; y: number }) => Math.atan2(-(p.y - centre.y), sx * (p.x - centre.x));
  // An image offset turned by a table angle a: into table axes, turned, and back.
  const turnOffset = (u: number, v: number, a: number) => {
    const c = Math.cos(a);
    const s = Math.sin(a);
    const tx = sx * u;
    const ty = -v;
    return { u: sx * (c * tx - s * ty), v: -(s * tx + c * ty) };
  };
  const found: MarkPoint[] = [];
  let template: Float32Array | null = null;
  let templateMean = 0;
  let templateNorm = 0;
  let startAngle = 0;
  let unwrapped = 0;
  const side = 2 * half + 1;

  const correlationAt = (image: GreyImage, x: number, y: number, turned: { u: number; v: number }[]): number => {
    if (!template) return Number.NaN;
    let sum = 0;
    let sumSq = 0;
    let cross = 0;
    for (let i = 0; i < turned.length; i++) {
      const o = turned[i]!;
      const v = sampleBilinear(image, x + o.u, y + o.v);
      if (Number.isNaN(v)) return Number.NaN;
      sum += v;
      sumSq += v * v;
      cross += v * template[i]!;
    }
    const n = turned.length;
    const variance = sumSq - (sum * sum) / n;
    if (!(variance > 0) || !(templateNorm > 0)) return Number.NaN;
    return (cross - templateMean * sum) / Math.sqrt(variance * templateNorm);
  };

  return {
    add(t, image) {
      if (!template) {
        template = new Float32Array(side * side);
        let k = 0;
        for (let v = -half; v <= half; v++) for (let u = -half; u <= half; u++) template[k++] = sampleBilinear(image, options.mark.x + u, options.mark.y + v);
        if (template.some((v) => Number.isNaN(v))) {
          template = null;
          return;
        }
        templateMean = template.reduce((s, v) => s + v, 0) / template.length;
        templateNorm = template.reduce((s, v) => s + (v - templateMean) ** 2, 0);
        startAngle = angleOf(options.mark);
        unwrapped = startAngle;
        found.push({ t, x: options.mark.x, y: options.mark.y, correlation: 1 });
        return;
      }
      const last = found[found.length - 1]!;
      // The rate so far: the set rate until the mark has turned a little, then its own.
      const first = found[0]!;
      const turnedSoFar = unwrapped - startAngle;
      const omega = found.length >= 3 && Math.abs(turnedSoFar) > 0.05 ? turnedSoFar / (last.t - first.t) : options.omegaSet;
      const lastAngle = angleOf(last);
      const radius = Math.hypot(last.x - centre.x, last.y - centre.y);
      const predictedAngle = lastAngle + omega * (t - last.t);
      const px = centre.x + sx * radius * Math.cos(predictedAngle);
      const py = centre.y - radius * Math.sin(predictedAngle);
      const turn = unwrapped + omega * (t - last.t) - startAngle;
      const turned: { u: number; v: number }[] = [];
      for (let v = -half; v <= half; v++) for (let u = -half; u <= half; u++) turned.push(turnOffset(u, v, turn));
      const cx = Math.round(px);
      const cy = Math.round(py);
      const w = 2 * search + 1;
      const scores = new Float64Array(w * w).fill(Number.NaN);
      let best = -Infinity;
      let bi = -1;
      let bj = -1;
      for (let j = 0; j < w; j++) {
        for (let i = 0; i < w; i++) {
          const c = correlationAt(image, cx - search + i, cy - search + j, turned);
          scores[j * w + i] = c;
          if (c > best) {
            best = c;
            bi = i;
            bj = j;
          }
        }
      }
      if (!(best >= minCorrelation) || bi <= 0 || bj <= 0 || bi >= w - 1 || bj >= w - 1) return;
      const at = (i: number, j: number) => scores[j * w + i]!;
      let x = cx - search + bi + parabolicPeak(at(bi - 1, bj), best, at(bi + 1, bj));
      let y = cy - search + bj + parabolicPeak(at(bi, bj - 1), best, at(bi, bj + 1));
      // A parabola through whole-pixel samples leans toward the pixel grid; a second one through
      // samples a quarter pixel either side of the first estimate (bilinear) takes most of that out.
      const step = 0.25;
      const middle = correlationAt(image, x, y, turned);
      x += step * parabolicPeak(correlationAt(image, x - step, y, turned), middle, correlationAt(image, x + step, y, turned));
      y += step * parabolicPeak(correlationAt(image, x, y - step, turned), middle, correlationAt(image, x, y + step, turned));
      const point = { t, x, y, correlation: best };
      const turnStep = angleOf(point) - lastAngle;
      unwrapped += Math.atan2(Math.sin(turnStep), Math.cos(turnStep));
      found.push(point);
    },
    points: () => found.slice(),
    result() {
      if (!template)
        return { omega: null, stdError: null, turns: 0, nPoints: 0, reason: "The mark on the table is too near the edge of the first frame to be followed." };
      return measureOmegaFromMark(found, centre, { mirrored });
    },
  };
}

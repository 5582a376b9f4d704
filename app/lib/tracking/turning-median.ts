/**
 * The turning model of a tilted view (Decision 76), as a factor on the still model's darkness
 * (255 − value): at each point of the turning frame, the median over the samples of the sample's
 * darkness over the still model's at the pixel where the sample shows that point. A lamp's glare
 * turning over a still grid lets through a share of the grid's darkness; a grid turning under a
 * still glare darkens what the still model holds by its lines' share. Dividing by the still model
 * sample by sample keeps what stands still out of the turning model, where a median of the values
 * (Decision 70's model) takes in the still part smeared along each point's circle, which is no
 * longer a ring about the marked centre once the turning centre lies elsewhere.
 *
 * Turned about a centre off the tank's, a point near the rim is carried outside the water at some
 * angles, where a sample shows the wall or the room instead; those samples are left out of its
 * median, as are the samples whose float covers it. Points too few samples see inside the tank
 * keep the factor 1 (the still model alone).
 */
import type { BackgroundExclusion } from "./background";
import { bilinear } from "./turning-background";
import { turnDistance, turnPoint, type TurnInView } from "./turning-geometry";

/** The fewest samples a point's median is taken over. */
const minSamples = 5;
/** A still model this close to white (grey levels of darkness) says nothing of what the turning part lets through. */
const minStillDarkness = 6;

export function turningMedian(
  samples: readonly Uint8Array[],
  still: Uint8Array,
  width: number,
  height: number,
  turn: TurnInView,
  angles: readonly number[],
  discs: readonly BackgroundExclusion[],
): Float32Array {
  const bound = turn.bound;
  const n = samples.length;
  const out = new Float32Array(width * height).fill(1);
  const values = new Float64Array(n);
  const at = new Float64Array(2);
  const plane = new Float64Array(2);
  const cos = angles.map(Math.cos);
  const sin = angles.map(Math.sin);
  const bySample: BackgroundExclusion[][] = Array.from({ length: n }, () => []);
  for (const d of discs) bySample[d.sample]?.push(d);
  const H = turn.rectify?.H;
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      if (!(turnDistance(turn, col, row, plane) <= turn.r)) continue;
      let count = 0;
      for (let j = 0; j < n; j++) {
        if (!turnPoint(turn, angles[j]!, col, row, at, cos[j], sin[j])) continue;
        const x = at[0]!;
        const y = at[1]!;
        if (!(x >= 0 && y >= 0 && x <= width - 1 && y <= height - 1)) continue;
        if (bound && H) {
          const w = H[2][0] * x + H[2][1] * y + H[2][2];
          const px = (H[0][0] * x + H[0][1] * y + H[0][2]) / w;
          const py = (H[1][0] * x + H[1][1] * y + H[1][2]) / w;
          if ((px - bound.cx) ** 2 + (py - bound.cy) ** 2 > bound.r * bound.r) continue;
        }
        let covered = false;
        for (const d of bySample[j]!) if ((x - d.x) ** 2 + (y - d.y) ** 2 <= d.r * d.r) covered = true;
        if (covered) continue;
        // The sample's darkness over the still model's at that pixel: what the turning part lets through.
        const stillDark = 255 - bilinear(still, width, height, x, y);
        if (stillDark < minStillDarkness) continue;
        const v = (255 - bilinear(samples[j]!, width, height, x, y)) / stillDark;
        // Insertion into the sorted values so far.
        let k = count++;
        while (k > 0 && values[k - 1]! > v) {
          values[k] = values[k - 1]!;
          k--;
        }
        values[k] = v;
      }
      if (count < minSamples) continue;
      out[row * width + col] = count % 2 ? values[count >> 1]! : (values[(count >> 1) - 1]! + values[count >> 1]!) / 2;
    }
  }
  return out;
}

/**
 * A frame's background where part of the view turns (turning-background.ts): the still model, and
 * at the turning disc's pixels the turning model, turned to the frame's angle, combined with it.
 * Done for every frame searched, so what does not depend on the angle (each pixel's column, row and
 * ring) is worked out once per model (`composeGeometry`) and kept by the caller.
 */
import { bilinear, type TurningBackground } from "./turning-background";
import { turnPoint } from "./turning-geometry";

/** Per pixel of the model's turning disc (in `pixels` order): its column and row, the ring below it and how far on towards the next. */
export interface ComposeGeometry {
  cols: Int32Array;
  rows: Int32Array;
  ring: Int32Array;
  fraction: Float64Array;
}

/**
 * Math.round for 0 ≤ v < 2³¹, without its call: `(v + 0.5) | 0` can round v + 0.5 up to the next
 * whole number when v lies within half a unit in the last place below a half (0.49999999999999994
 * gives 1); r − 0.5 is exact, so `v < r − 0.5` finds that case and steps back.
 */
export function roundHalfUp(v: number): number {
  const r = (v + 0.5) | 0;
  return v < r - 0.5 ? r - 1 : r;
}

/** The angle-free part of `backgroundAt` for a model whose images hold `channels` interleaved channels. */
export function composeGeometry(model: TurningBackground, width: number, channels: number): ComposeGeometry {
  const { turn, rings, pixels } = model;
  const last = rings.length / channels - 1;
  const geometry: ComposeGeometry = {
    cols: new Int32Array(pixels.length),
    rows: new Int32Array(pixels.length),
    ring: new Int32Array(pixels.length),
    fraction: new Float64Array(pixels.length),
  };
  for (let i = 0; i < pixels.length; i++) {
    const p = pixels[i]!;
    const row = (p / width) | 0;
    const dx = p - row * width - turn.cx;
    const dy = row - turn.cy;
    geometry.cols[i] = p - row * width;
    geometry.rows[i] = row;
    // The ring median at this distance, between the two nearest rings' (ring i is centred on i + ½).
    // (Math.hypot, kept for one channel, where the floats' figures were measured with it, costs several times Math.sqrt.)
    const at = Math.min(last, Math.max(0, (channels === 1 ? Math.hypot(dx, dy) : Math.sqrt(dx * dx + dy * dy)) - 0.5));
    const i0 = Math.min(last - 1, Math.floor(at));
    geometry.ring[i] = i0;
    geometry.fraction[i] = at - i0;
  }
  return geometry;
}

/**
 * The background of one frame, whose turning part stands at `angle`: the still model, and at the
 * turning disc's pixels the turning model combined with it. Both models see the same ring average
 * (the illumination, the grid's rings), which the combination counts once: a lamp's glare on the
 * water over a grid line is the line from the one model plus the glare from the other, where
 * choosing either model alone would leave one of them in the difference. The images may hold
 * interleaved channels (RGB for dye, the channel count read from the sizes); each channel
 * combines on its own. Written into `out`. `geometry` is `composeGeometry`'s for this model,
 * made here when not given.
 */
export function backgroundAt(
  still: Uint8Array,
  model: TurningBackground,
  frame: Uint8Array,
  width: number,
  height: number,
  angle: number,
  out: Uint8Array,
  geometry?: ComposeGeometry,
): void {
  const channels = still.length / (width * height);
  if (!(channels === 1 || channels === 3) || frame.length !== still.length || out.length !== still.length) {
    throw new Error("The background, the frame and the output must be the same size.");
  }
  out.set(still);
  const { turn, turning, rings, pixels } = model;
  // The turning model at this frame: a pixel p shows turning-frame point c + R(−angle)(p − c).
  const cos = Math.cos(angle);
  const sin = Math.sin(angle);
  if (turn.rectify && !model.factor) throw new Error("A tilted view's turning model is a factor (turning-median.ts).");
  if (model.factor) {
    if (channels !== 1) throw new Error("A tilted view's turning model is made for one channel.");
    const plane = new Float64Array(2);
    for (let i = 0; i < pixels.length; i++) {
      const p = pixels[i]!;
      const row = (p / width) | 0;
      // A tilted view: the factor at H⁻¹(c + R(−angle)(H p − c)) on the still model's darkness.
      turnPoint(turn, -angle, p - row * width, row, plane, cos, -sin);
      const value = 255 - (255 - still[p]!) * bilinear(model.factor, width, height, plane[0]!, plane[1]!);
      out[p] = value <= 0 ? 0 : value >= 255 ? 255 : roundHalfUp(value);
    }
    return;
  }
  const { cols, rows, ring, fraction } = geometry ?? composeGeometry(model, width, channels);
  if (cols.length !== pixels.length) throw new Error("The geometry was made for another turning model.");
  const { cx, cy } = turn;
  for (let i = 0; i < pixels.length; i++) {
    const p = pixels[i]!;
    const dx = cols[i]! - cx;
    const dy = rows[i]! - cy;
    const x = cx + cos * dx + sin * dy;
    const y = cy - sin * dx + cos * dy;
    // bilinear() at (x, y), its weights worked out once for every channel.
    // Clamped to the image, as bilinear() does; `| 0` floors a point inside it without a call.
    let x0 = x | 0;
    let y0 = y | 0;
    let fx = x - x0;
    let fy = y - y0;
    if (!(x >= 0 && y >= 0 && x0 <= width - 2 && y0 <= height - 2)) {
      x0 = Math.min(width - 2, Math.max(0, Math.floor(x)));
      y0 = Math.min(height - 2, Math.max(0, Math.floor(y)));
      fx = Math.min(1, Math.max(0, x - x0));
      fy = Math.min(1, Math.max(0, y - y0));
    }
    const corner = (y0 * width + x0) * channels;
    const below = corner + width * channels;
    const i0 = ring[i]!;
    const f = fraction[i]!;
    for (let c = 0; c < channels; c++) {
      const q = p * channels + c;
      const a = corner + c;
      const b = below + c;
      const top = turning[a]! + fx * (turning[a + channels]! - turning[a]!);
      const under = turning[b]! + fx * (turning[b + channels]! - turning[b]!);
      const turned = top + fy * (under - top);
      const r0 = rings[Math.max(0, i0) * channels + c]!;
      const level = i0 < 0 ? r0 : r0 + f * (rings[(i0 + 1) * channels + c]! - r0);
      // In darkness (255 − value) the two models multiply: glare lets through a share of the bottom's darkness.
      const value = 255 - ((255 - still[q]!) * (255 - turned)) / Math.max(1, 255 - level);
      out[q] = value <= 0 ? 0 : value >= 255 ? 255 : roundHalfUp(value);
    }
  }
}

/**
 * The mean square difference between the samples and each background over the turning disc:
 * the still model alone, and the still and turning models together (each sample at its angle).
 * Where the turning part does not turn about the centre as the plan says (a camera not quite
 * overhead sees the bottom turn about another point than the water's surface), the turning model
 * is blurred and the two together explain the samples worse than the still model alone.
 */
export function samplesMisfit(
  samples: readonly Uint8Array[],
  still: Uint8Array,
  model: TurningBackground,
  width: number,
  height: number,
  angles: readonly number[],
): { still: number; combined: number } {
  const combined = new Uint8Array(still.length);
  let stillSum = 0;
  let combinedSum = 0;
  const channels = still.length / (width * height);
  const geometry = model.factor ? undefined : composeGeometry(model, width, channels);
  samples.forEach((sample, j) => {
    backgroundAt(still, model, sample, width, height, angles[j]!, combined, geometry);
    for (const p of model.pixels) {
      for (let q = p * channels, end = q + channels; q < end; q++) {
        stillSum += (sample[q]! - still[q]!) ** 2;
        combinedSum += (sample[q]! - combined[q]!) ** 2;
      }
    }
  });
  const count = Math.max(1, samples.length * model.pixels.length * channels);
  return { still: stillSum / count, combined: combinedSum / count };
}

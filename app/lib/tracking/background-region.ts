/**
 * The part of the crop a stack's dye background is made over. Everything that reads a dye
 * background reads it inside the tank edge: the threshold's spans and blocks, the bottom's fit,
 * the noise's sample, the patch's measurement (plan-crop.ts `rowSpans`, dye-centre.ts), and the
 * turning model's disc, which lies inside the tank (plan.ts). The median of 21 sampled colour
 * frames costs about a third of a second a stack on a 671 × 671 crop, and the crop's corners
 * outside the tank are a fifth of it. Pixels outside the region are left as they are (zero in a
 * new array); the background's fill (background-fill.ts) counts them as seen by every sample, so
 * it neither fills them nor, where the region reaches beyond every tracer's exclusion by a pixel
 * or more, reads them.
 */
import { medianInto, type BackgroundExclusion, type ExclusionSet } from "./background";

/**
 * Pixels of a `width` × `height` crop (1: inside) within `margin` px of the tank edge, or null
 * without a tank (the whole crop). `margin` covers what a reader takes beside a pixel inside the
 * edge: a detection block's reach and a bilinear read's neighbour.
 */
export function tankRegion(width: number, height: number, tank: { cx: number; cy: number; r: number } | null, margin: number): Uint8Array | null {
  if (!tank) return null;
  const region = new Uint8Array(new SharedArrayBuffer(width * height));
  const reach = tank.r + margin;
  for (let row = 0; row < height; row++) {
    const dy = row - tank.cy;
    const half2 = reach * reach - dy * dy;
    if (half2 < 0) continue;
    const half = Math.sqrt(half2);
    const a = Math.max(0, Math.ceil(tank.cx - half));
    const b = Math.min(width - 1, Math.floor(tank.cx + half));
    if (a <= b) region.fill(1, row * width + a, row * width + b + 1);
  }
  return region;
}

/**
 * `region` and, around each exclusion, the box its disc or ellipse fits in grown by `pad` px: a
 * second median leaves the tracer out there and the fill works from the pixels round it, so all
 * of it must be made even where a tracer's exclusion reaches past the tank edge. A new shared
 * array; the same `region` when nothing lies outside it.
 */
export function withExclusions(region: Uint8Array, width: number, discs: readonly BackgroundExclusion[], pad: number): Uint8Array {
  const height = region.length / width;
  let out: Uint8Array | null = null;
  for (const d of discs) {
    // An ellipse dᵀS⁻¹d ≤ r² reaches r·√Sxx across and r·√Syy down (its support in those directions).
    let halfX = d.r;
    let halfY = d.r;
    if (d.shape) {
      const { xx, xy, yy } = d.shape;
      if (!(xx * yy - xy * xy > 0)) continue; // medianInto leaves such a shape out of nothing
      halfX = d.r * Math.sqrt(xx);
      halfY = d.r * Math.sqrt(yy);
    }
    const c0 = Math.max(0, Math.floor(d.x - halfX) - pad);
    const c1 = Math.min(width - 1, Math.ceil(d.x + halfX) + pad);
    const r0 = Math.max(0, Math.floor(d.y - halfY) - pad);
    const r1 = Math.min(height - 1, Math.ceil(d.y + halfY) + pad);
    for (let row = r0; row <= r1; row++) {
      for (let col = c0, p = row * width + c0; col <= c1; col++, p++) {
        if ((out ?? region)[p]) continue;
        out ??= copyShared(region);
        out[p] = 1;
      }
    }
  }
  return out ?? region;
}

/** The pixels of `wider` that `region` lacks (a new shared array). */
export function regionBeyond(wider: Uint8Array, region: Uint8Array): Uint8Array {
  const out = new Uint8Array(new SharedArrayBuffer(wider.length));
  for (let p = 0; p < wider.length; p++) out[p] = wider[p]! & (region[p]! ^ 1);
  return out;
}

function copyShared(region: Uint8Array): Uint8Array {
  const out = new Uint8Array(new SharedArrayBuffer(region.length));
  out.set(region);
  return out;
}

/**
 * medianInto for the pixels of [from, to) inside `region`; the others are left as they are, and
 * their `used` count (when given) is every sample's, so that the fill takes them as known. One
 * call over the whole range, so that V8 optimises its loop as it runs.
 */
export function medianOverRegion(
  frames: readonly Uint8Array[],
  out: Uint8Array,
  from: number,
  to: number,
  region: Uint8Array,
  exclusions?: ExclusionSet,
  used?: Uint8Array,
  channels = 1,
  plain?: Uint8Array,
): void {
  if (region.length * channels !== out.length) throw new Error("The region differs in size from the background.");
  medianInto(frames, out, from, to, exclusions, used, channels, plain, region);
}

/**
 * The bottom's level under the light (dye-bottom.ts) on exact backgrounds: an uneven light over a
 * grey bottom (a quadratic surface), dark grid lines and a lamp's white glare on top.
 */
import { describe, expect, it } from "vitest";
import { solveLinear } from "../linear-solve";
import { bottomLevel, fitBottomSurface, middleValue, type BottomSurface } from "./dye-bottom";

const width = 240;
const height = 200;
const spans = new Int32Array(2 * height);
for (let row = 0; row < height; row++) {
  spans[2 * row] = 0;
  spans[2 * row + 1] = width;
}

/** Light on the bottom: brighter to the right and falling off towards the top and bottom edges. */
const light = (col: number, row: number) => 150 + 0.2 * col - 0.002 * (row - 100) ** 2;

function background(options: { lines?: boolean; glare?: number }): Uint8Array {
  const out = new Uint8Array(width * height * 3);
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      let level = light(col, row);
      if (options.lines && (col % 19 < 2 || row % 19 < 2)) level *= 0.65;
      if (options.glare) level += options.glare * Math.exp(-((col - 160) ** 2 + (row - 60) ** 2) / (2 * 25 * 25));
      out.fill(Math.min(255, Math.round(level)), 3 * (row * width + col), 3 * (row * width + col) + 3);
    }
  }
  return out;
}

/** How far the fitted level is from the light at worst, beyond `clearOfGlare` px of the glare's centre and within it. */
function worstMiss(bg: Uint8Array, clearOfGlare = 0): { worst: number; underGlare: number; margin: number } {
  const surface = fitBottomSurface(bg, width, height, spans, 4)!;
  let worst = 0;
  let underGlare = 0;
  for (let row = 0; row < height; row += 7) {
    for (let col = 0; col < width; col += 7) {
      const miss = Math.abs(bottomLevel(surface, col, row) - light(col, row));
      if (Math.hypot(col - 160, row - 60) >= clearOfGlare) worst = Math.max(worst, miss);
      else underGlare = Math.max(underGlare, miss);
    }
  }
  return { worst, underGlare, margin: surface.margin };
}

describe("the bottom's level under the light", () => {
  it("follows an uneven light exactly (within the rounding to whole grey levels)", () => {
    const { worst, margin } = worstMiss(background({}));
    expect(worst).toBeLessThan(0.6);
    expect(margin).toBeLessThan(3);
  });

  it("keeps within 3 grey levels of the bottom, not to dark grid lines over a fifth of it nor to glare of 80 grey levels on top", () => {
    const { worst, underGlare, margin } = worstMiss(background({ lines: true, glare: 80 }), 50);
    console.info(
      `bottom's level with lines and glare: at most ${worst.toFixed(2)} grey levels off, ${underGlare.toFixed(2)} within 50 px of the glare; margin ${margin.toFixed(2)}`,
    );
    // The glare's faint edge, within the margin of the bottom, is not told from it: it lifts the fit a little.
    expect(worst).toBeLessThan(3);
    expect(underGlare).toBeLessThan(3);
    expect(margin).toBeLessThan(3);
  });

  it("is not made from too few pixels", () => {
    const few = new Int32Array(2 * height);
    expect(fitBottomSurface(background({}), width, height, few, 4)).toBeNull();
  });
});

/**
 * The fit as first written: the normal equations summed in full and each median read off a full
 * sort. The faster fit must give the same numbers to the last digit (the detector's finds rest on them).
 */
function plainFit(bg: Uint8Array, stride: number): BottomSurface | null {
  const cols: number[] = [];
  const rows: number[] = [];
  const levels: number[] = [];
  for (let row = 0; row < height; row += stride) {
    for (let col = spans[2 * row]!; col < spans[2 * row + 1]!; col += stride) {
      const q = 3 * (row * width + col);
      cols.push(col);
      rows.push(row);
      levels.push((bg[q]! + bg[q + 1]! + bg[q + 2]!) / 3);
    }
  }
  const count = levels.length;
  const x = cols.reduce((s, v) => s + v, 0) / count;
  const y = rows.reduce((s, v) => s + v, 0) / count;
  const scale = Math.max(1, Math.max(width, height) / 2);
  const residuals = new Float64Array(count);
  const median = Float64Array.from(levels).sort()[count >> 1]!;
  for (let i = 0; i < count; i++) residuals[i] = Math.abs(levels[i]! - median);
  let limit = 2.5 * Math.max(1, 1.4826 * residuals.sort()[count >> 1]!);
  let surface: BottomSurface = { x, y, scale, c: Float64Array.of(median, 0, 0, 0, 0, 0), margin: limit };
  for (let round = 0; round <= 10; round++) {
    const a = new Float64Array(36);
    const b = new Float64Array(6);
    let used = 0;
    for (let i = 0; i < count; i++) {
      if (Math.abs(levels[i]! - bottomLevel(surface, cols[i]!, rows[i]!)) > limit) continue;
      const u = (cols[i]! - x) / scale;
      const v = (rows[i]! - y) / scale;
      const f = [1, u, v, u * u, u * v, v * v];
      for (let j = 0; j < 6; j++) {
        b[j]! += f[j]! * levels[i]!;
        for (let k = 0; k < 6; k++) a[j * 6 + k]! += f[j]! * f[k]!;
      }
      used++;
    }
    const solved = used < 24 ? null : solveLinear(a, b, 6);
    if (!solved) break;
    const next: BottomSurface = { x, y, scale, c: solved, margin: 0 };
    let n = 0;
    for (let i = 0; i < count; i++) {
      const r = levels[i]! - bottomLevel(next, cols[i]!, rows[i]!);
      if (Math.abs(r) <= limit) residuals[n++] = Math.abs(r);
    }
    limit = 2.5 * Math.max(1, 1.4826 * residuals.subarray(0, n).sort()[n >> 1]!);
    next.margin = limit;
    surface = next;
  }
  return surface;
}

describe("the bottom's fit, made faster", () => {
  it("gives the plain fit's numbers to the last digit, with and without lines and glare, on every stride", () => {
    for (const options of [{}, { lines: true }, { lines: true, glare: 80 }, { glare: 140 }]) {
      for (const stride of [2, 4, 8]) {
        const bg = background(options);
        const fast = fitBottomSurface(bg, width, height, spans, stride)!;
        const plain = plainFit(bg, stride)!;
        expect(Array.from(fast.c)).toEqual(Array.from(plain.c));
        expect([fast.margin, fast.x, fast.y, fast.scale]).toEqual([plain.margin, plain.x, plain.y, plain.scale]);
      }
    }
  });
});

describe("the middle value of a fit's residuals", () => {
  it("is the value a full sort puts at n >> 1, duplicates, ties and prefixes included", () => {
    // A small linear congruential generator (Numerical Recipes' constants, from memory): repeatable lists.
    let state = 12345;
    const next = () => (state = (Math.imul(state, 1664525) + 1013904223) >>> 0) / 2 ** 32;
    for (let trial = 0; trial < 300; trial++) {
      const length = 1 + Math.floor(next() * 60);
      const distinct = 1 + Math.floor(next() * 10);
      const values = Float64Array.from({ length }, () => Math.floor(next() * distinct) + (trial % 3 === 0 ? next() : 0));
      const n = 1 + Math.floor(next() * length);
      const sorted = values.slice(0, n).sort();
      expect(middleValue(values.slice(), n)).toBe(sorted[n >> 1]);
    }
  });

  it("is NaN for no values, as the sorted empty list's missing value gives in arithmetic", () => {
    expect(middleValue(new Float64Array(4), 0)).toBeNaN();
  });
});

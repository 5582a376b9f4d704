/**
 * The bottom's level under the light (dye-bottom.ts) on exact backgrounds: an uneven light over a
 * grey bottom (a quadratic surface), dark grid lines and a lamp's white glare on top.
 */
import { describe, expect, it } from "vitest";
import { bottomLevel, fitBottomSurface } from "./dye-bottom";

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

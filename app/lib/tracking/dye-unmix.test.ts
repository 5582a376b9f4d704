/**
 * The dye's difference in linear light (dye-unmix.ts), and the dye centre reading it on exact
 * images of a camera's kind: light adds in linear light (the bottom seen through the dye, plus
 * white glare from the water's surface), then each value is written through the sRGB curve and
 * rounded to 8 bits, as a camera's JPEG (and the ray-traced scenes) hold it.
 */
import { createRequire } from "node:module";
import { afterAll, describe, expect, it } from "vitest";
import { createDetector, type Detector, type FrameImage } from "./detect";
import { inverseFreeLevel, linearDifference, linearOf, linearOfLevel, stillGlare } from "./dye-unmix";
import type { OpenCv } from "./opencv-types";
import { planDetection } from "./plan";
import { cropForPlan } from "./plan-crop";
import type { DyeLight } from "./types";

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const detectors: Detector[] = [];
afterAll(() => detectors.forEach((d) => d.dispose()));

/** The sRGB curve's inverse (IEC 61966-2-1:1999), on the 0–255 scale, unrounded. */
function encoded(linear: number): number {
  const l = Math.max(0, linear / 255);
  return 255 * (l <= 0.0031308 ? 12.92 * l : 1.055 * l ** (1 / 2.4) - 0.055);
}

describe("the sRGB curve (IEC 61966-2-1:1999)", () => {
  it("gives the standard's values: 0 and 255 fixed, its linear piece below 0.04045, mid-grey 0.5 written as 188", () => {
    expect(linearOf[0]).toBe(0);
    expect(linearOf[255]).toBeCloseTo(255, 9);
    expect(linearOf[10]).toBeCloseTo(10 / 12.92, 9);
    expect(linearOf[188]! / 255).toBeCloseTo(0.5029, 4);
    expect(linearOfLevel(187.5) / 255).toBeCloseTo(0.4995, 3);
    for (let v = 0; v < 256; v++) expect(Math.round(encoded(linearOf[v]!))).toBe(v);
  });
});

describe("the dye's difference in linear light", () => {
  const bottom = [170, 176, 182];
  const transmission = [0.95, 0.6, 0.67];
  const diff = new Float64Array(3);
  /** The largest step of the 8-bit scale round `v`, in linear light. */
  const step = (v: number) => Math.max(linearOf[Math.min(255, v + 1)]! - linearOf[v]!, linearOf[v]! - linearOf[Math.max(0, v - 1)]!);
  /** The difference's change of colour (its part summing to zero over the channels), and how far 8-bit rounding may move it. */
  const colourPart = (glare: number, stillGlareAmount: number): { part: number[]; rounding: number } => {
    const bg = bottom.map((b) => Math.round(encoded(linearOf[b]! + stillGlareAmount)));
    const frame = bottom.map((b, c) => Math.round(encoded(linearOf[b]! * transmission[c]! + stillGlareAmount + glare)));
    linearDifference(frame[0]!, frame[1]!, frame[2]!, bg[0]!, bg[1]!, bg[2]!, diff, 1);
    const mean = (diff[0]! + diff[1]! + diff[2]!) / 3;
    // Each channel's difference is off by at most half a step of each value; its part summing to zero by 4/3 of the largest.
    const rounding = (4 / 3) * Math.max(...[0, 1, 2].map((c) => 0.5 * (step(frame[c]!) + step(bg[c]!))));
    return { part: [diff[0]! - mean, diff[1]! - mean, diff[2]! - mean], rounding };
  };

  it("keeps the dye's change of colour, to the 8-bit rounding, whatever white glare lies on it or in the background", () => {
    const plain = colourPart(0, 0);
    for (const [glare, still] of [
      [40, 0],
      [0, 60],
      [30, 60],
    ] as const) {
      const under = colourPart(glare, still);
      for (let c = 0; c < 3; c++) expect(Math.abs(under.part[c]! - plain.part[c]!)).toBeLessThanOrEqual(plain.rounding + under.rounding);
    }
    // The change it keeps is well above that rounding.
    expect(Math.abs(plain.part[1]!)).toBeGreaterThan(5 * plain.rounding);
  });

  it("divides by the bottom's level without the glare the still model holds above the bottom's fitted level", () => {
    const cap = 185;
    expect(stillGlare(180, 180, 180, cap)).toBe(0);
    const glare = stillGlare(230, 230, 230, cap);
    expect(glare).toBeCloseTo(linearOf[230]! - linearOfLevel(cap), 9);
    expect(1 / inverseFreeLevel(230, 230, 230, glare)).toBeCloseTo(linearOfLevel(cap), 9);
    // Where the glare is nearly all of the background, the divisor keeps a share of it, not noise.
    expect(1 / inverseFreeLevel(60, 60, 60, stillGlare(60, 60, 60, 40))).toBeGreaterThanOrEqual(0.15 * linearOf[60]!);
  });
});

describe("a faint dye patch under glare that adds in linear light (exact images, written through the sRGB curve)", () => {
  const width = 200;
  const height = 160;
  const centre = { x: 100, y: 80 };
  const truth = { x: 96.3, y: 84.7 };
  /** Absorbance per channel at the patch's peak (Beer–Lambert's law, common practice for a dye in water): a pink-red dye. */
  const absorbance = [0.05, 0.5, 0.4];
  const bottom = 180;
  const spotAt = { x: truth.x + 7 * Math.cos(0.5), y: truth.y + 7 * Math.sin(0.5) };
  const amount = (col: number, row: number) => {
    const dx = col - truth.x;
    const dy = row - truth.y;
    const u = dx * Math.cos(0.5) + dy * Math.sin(0.5);
    const v = -dx * Math.sin(0.5) + dy * Math.cos(0.5);
    return Math.exp(-0.5 * ((u / 6) ** 2 + (v / 2) ** 2));
  };
  /** Linear light that lifts the plain bottom by `levels` 8-bit levels at its peak. */
  const lift = (levels: number) => 255 * (((bottom + levels) / 255 + 0.055) / 1.055) ** 2.4 - linearOf[bottom]!;

  /** The frame and its (glare-free) background; glare is white light, in the frame only. */
  function scene(glareAt: (col: number, row: number) => number): { frame: FrameImage; background: Uint8Array; clipped: number } {
    const background = new Uint8Array(width * height * 3).fill(bottom);
    const data = new Uint8Array(width * height * 3);
    let clipped = 0;
    for (let row = 0; row < height; row++) {
      for (let col = 0; col < width; col++) {
        const glare = glareAt(col, row);
        for (let c = 0; c < 3; c++) {
          const value = Math.min(255, Math.round(encoded(linearOf[bottom]! * Math.exp(-absorbance[c]! * amount(col, row)) + glare)));
          data[3 * (row * width + col) + c] = value;
          if (c === 0 && value >= 250) clipped++;
        }
      }
    }
    return { frame: { data, width, height, channels: 3 }, background, clipped };
  }

  function miss(light: DyeLight, glareAt: (col: number, row: number) => number): { off: number; found: number; clipped: number } {
    const { frame, background, clipped } = scene(glareAt);
    const plan = planDetection({ tracer: "dye", centre, tankEdge: { cx: centre.x, cy: centre.y, r: 75 }, mirrored: false, dyeLight: light }, width, height);
    const detector = createDetector(cv, plan);
    detectors.push(detector);
    const found = detector.detect(cropForPlan(frame, plan), cropForPlan({ data: background, width, height, channels: 3 }, plan).data);
    return { off: found[0] ? Math.hypot(found[0].x - truth.x, found[0].y - truth.y) : Infinity, found: found.length, clipped };
  }

  it("is centred within 0.05 px under glare of 50 levels the background lacks, read in linear light (in the frames' values: 0.12 px)", () => {
    const glare = (col: number, row: number) => lift(50) * Math.exp(-((col - 110) ** 2 + (row - 70) ** 2) / (2 * 18 * 18));
    const linear = miss("linear", glare);
    console.info(`linear light ${linear.off.toFixed(3)} px, the frames' values ${miss("encoded", glare).off.toFixed(3)} px`);
    expect(linear.found).toBe(1);
    expect(linear.off).toBeLessThan(0.05);
  });

  it("is centred within 0.1 px under a small glare clipping one end of it, read in linear light (in the frames' values: 1.6 px)", () => {
    const glare = (col: number, row: number) => lift(90) * Math.exp(-((col - spotAt.x) ** 2 + (row - spotAt.y) ** 2) / (2 * 4 * 4));
    const linear = miss("linear", glare);
    console.info(`linear light ${linear.off.toFixed(3)} px (${linear.clipped} pixels clipped), the frames' values ${miss("encoded", glare).off.toFixed(3)} px`);
    expect(linear.clipped).toBeGreaterThan(10);
    expect(linear.found).toBe(1);
    expect(linear.off).toBeLessThan(0.1);
  });
});

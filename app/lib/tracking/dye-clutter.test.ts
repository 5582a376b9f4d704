/**
 * A dye patch in exact (noiseless) images of a grey tank bottom with the clutter a real tank
 * shows: grid lines the background does not hold (a lab-fixed camera sees the grid turn), white
 * glare turning through the view, and the dye's own coloured shadow on the bottom. The dye
 * absorbs by Beer–Lambert's law (common practice for a dye in water), faintly enough that its
 * saturation stays under 100, as the ray-traced scenes' dye does (70–126 measured there).
 */
import { createRequire } from "node:module";
import { afterAll, describe, expect, it } from "vitest";
import { createDetector, type Detector, type FrameImage } from "./detect";
import { cropForPlan } from "./plan-crop";
import { distinctPatches } from "./dye-patches";
import { relativeChangeAbove, relativeChangeSquared, levelDifference } from "./dye-signal";
import { hsv } from "./hsv";
import type { OpenCv } from "./opencv-types";
import { planDetection } from "./plan";
import type { Detection } from "./types";

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const detectors: Detector[] = [];
afterAll(() => detectors.forEach((d) => d.dispose()));

const width = 200;
const height = 160;
const centre = { x: 100, y: 80 };
const truth = { x: 96.3, y: 84.7 };
/** Absorbance per channel at the patch's peak: a pink-red dye. */
const absorbance = [0.05, 0.5, 0.4];
const bottom = 180;

interface Clutter {
  /** A dark line (70 % of the light) along x = this, 2 px wide, in the frame only. */
  lineAt?: number;
  /** White glare (peak grey levels) centred at (110, 70), σ 18 px, in the frame only. */
  glare?: number;
  /** The dye's shadow on the bottom, lit by this share of the light, offset by (22, −14) px. */
  shadow?: number;
  /** White glare the background holds too (a lamp's glare still in the view): this peak, σ 18 px, centred 12 px off the patch's centre across its long axis. */
  stillGlare?: number;
  /** A small white glare (σ 4 px, this peak in grey levels) on the patch's long axis 7 px from its centre, clipped at 255 where it is brightest. */
  spot?: number;
}

/** Where `spot` lies: 7 px along the patch's long axis (turned 0.5 rad). */
const spotAt = { x: truth.x + 7 * Math.cos(0.5), y: truth.y + 7 * Math.sin(0.5) };
/** Where `stillGlare` lies: 12 px from the patch's centre across its long axis. */
const stillGlareAt = { x: truth.x - 12 * Math.sin(0.5), y: truth.y + 12 * Math.cos(0.5) };

/** The dye's amount at a pixel: a 3:1 Gaussian ellipse (σ 6 × 2 px) turned 0.5 rad. */
function amount(col: number, row: number, at: { x: number; y: number }): number {
  const dx = col - at.x;
  const dy = row - at.y;
  const u = dx * Math.cos(0.5) + dy * Math.sin(0.5);
  const v = -dx * Math.sin(0.5) + dy * Math.cos(0.5);
  return Math.exp(-0.5 * ((u / 6) ** 2 + (v / 2) ** 2));
}

function scene(clutter: Clutter = {}): { frame: FrameImage; background: Uint8Array } {
  const background = new Uint8Array(width * height * 3).fill(bottom);
  if (clutter.stillGlare) {
    for (let p = 0; p < width * height; p++) {
      const still = clutter.stillGlare * Math.exp(-(((p % width) - stillGlareAt.x) ** 2 + (Math.floor(p / width) - stillGlareAt.y) ** 2) / (2 * 18 * 18));
      background.fill(Math.min(255, Math.round(bottom + still)), 3 * p, 3 * p + 3);
    }
  }
  const data = new Uint8Array(width * height * 3);
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const light = clutter.lineAt !== undefined && Math.abs(col + 0.5 - clutter.lineAt) < 1 ? 0.7 : 1;
      const glare =
        (clutter.glare ? clutter.glare * Math.exp(-((col - 110) ** 2 + (row - 70) ** 2) / (2 * 18 * 18)) : 0) +
        (clutter.spot ? clutter.spot * Math.exp(-((col - spotAt.x) ** 2 + (row - spotAt.y) ** 2) / (2 * 4 * 4)) : 0) +
        (clutter.stillGlare ? clutter.stillGlare * Math.exp(-((col - stillGlareAt.x) ** 2 + (row - stillGlareAt.y) ** 2) / (2 * 18 * 18)) : 0);
      const dye = amount(col, row, truth);
      const shade = clutter.shadow ? amount(col, row, { x: truth.x + 22, y: truth.y - 14 }) : 0;
      for (let c = 0; c < 3; c++) {
        const shadow = clutter.shadow ? 1 - clutter.shadow + clutter.shadow * Math.exp(-absorbance[c]! * shade) : 1;
        const value = bottom * light * shadow * Math.exp(-absorbance[c]! * dye) + glare;
        data[3 * (row * width + col) + c] = Math.min(255, Math.round(value));
      }
    }
  }
  return { frame: { data, width, height, channels: 3 }, background };
}

/** The detector's finds in one frame, against the exact background, both cropped as the decoder crops. */
function detectFrame(frame: FrameImage, background: Uint8Array): Detection[] {
  const plan = planDetection({ tracer: "dye", centre, tankEdge: { cx: centre.x, cy: centre.y, r: 75 }, mirrored: false }, width, height);
  const detector = createDetector(cv, plan);
  detectors.push(detector);
  return detector.detect(cropForPlan(frame, plan), cropForPlan({ data: background, width, height, channels: 3 }, plan).data);
}

function detectIn(clutter: Clutter): Detection[] {
  const { frame, background } = scene(clutter);
  return detectFrame(frame, background);
}

const miss = (d: Detection) => Math.hypot(d.x - truth.x, d.y - truth.y);

describe("a faint dye patch among a tank's clutter (exact images)", () => {
  it("is fainter than the colour range's saturation floor of 100 at its peak", () => {
    const { frame } = scene();
    const out = new Float64Array(3);
    const q = 3 * (Math.round(truth.y) * width + Math.round(truth.x));
    hsv(frame.data[q]!, frame.data[q + 1]!, frame.data[q + 2]!, out);
    expect(out[1]).toBeLessThan(100);
    expect(out[1]).toBeGreaterThan(60);
  });

  it("is found on a plain bottom, at its centre within 0.02 px", () => {
    const found = detectIn({});
    expect(found).toHaveLength(1);
    expect(miss(found[0]!)).toBeLessThan(0.02);
  });

  it("is centred within 0.05 px under white glare of 50 grey levels that the background does not hold, its gradient across the patch", () => {
    const found = detectIn({ glare: 50 });
    console.info(`dye under glare: ${miss(found[0]!).toFixed(3)} px off`);
    expect(found).toHaveLength(1);
    expect(miss(found[0]!)).toBeLessThan(0.05);
  });

  it("is centred within 0.1 px under a small glare that clips one end of it at 255 (read as it is, 0.14 px): a clipped pixel takes its mirror image's signal", () => {
    const { frame } = scene({ spot: 90 });
    let clippedPixels = 0;
    for (let p = 0; p < width * height; p++) if (frame.data[3 * p] === 255) clippedPixels++;
    const found = detectIn({ spot: 90 });
    console.info(`dye under a clipped glare (${clippedPixels} pixels at 255): ${miss(found[0]!).toFixed(3)} px off`);
    expect(clippedPixels).toBeGreaterThan(10);
    expect(found).toHaveLength(1);
    expect(miss(found[0]!)).toBeLessThan(0.1);
  });

  it("is centred within 0.01 px under white glare of 60 grey levels that the background holds as well (divided by the glare's level, 0.034 px): the bottom's level divides the difference", () => {
    const found = detectIn({ stillGlare: 60 });
    console.info(`dye under a still glare: ${miss(found[0]!).toFixed(3)} px off`);
    expect(found).toHaveLength(1);
    expect(miss(found[0]!)).toBeLessThan(0.01);
  });

  it("is found alone when its shadow, lit by half the light, lies 26 px away: the shadow changes the colour less", () => {
    const found = detectIn({ shadow: 0.5 });
    expect(found).toHaveLength(1);
    expect(miss(found[0]!)).toBeLessThan(0.02);
  });

  it("is found, and the line is not, when a dark grid line the background does not hold crosses it (the centre within a pixel: the line still weighs on it)", () => {
    const found = detectIn({ lineAt: 99 });
    console.info(`dye across a grid line: ${miss(found[0]!).toFixed(3)} px off`);
    expect(found).toHaveLength(1);
    expect(miss(found[0]!)).toBeLessThan(1);
  });

  it("finds nothing in glare, a line and a shadow-free bottom alone", () => {
    const background = new Uint8Array(width * height * 3).fill(bottom);
    const data = new Uint8Array(width * height * 3);
    for (let p = 0; p < width * height; p++) {
      const col = p % width;
      const row = (p / width) | 0;
      const light = Math.abs(col + 0.5 - 99) < 1 ? 0.7 : 1;
      const glare = 60 * Math.exp(-((col - 110) ** 2 + (row - 70) ** 2) / (2 * 18 * 18));
      data.fill(Math.min(255, Math.round(bottom * light + glare)), 3 * p, 3 * p + 3);
    }
    expect(detectFrame({ data, width, height, channels: 3 }, background)).toEqual([]);
  });
});

describe("the dye's signal (dye-signal.ts)", () => {
  it("is zero in ratios for a line or shadow (all channels × 0.7) and for white glare on a grey bottom", () => {
    expect(relativeChangeSquared(126, 126, 126, 180, 180, 180)).toBeCloseTo(0, 12);
    expect(relativeChangeSquared(230, 230, 230, 180, 180, 180)).toBeCloseTo(0, 12);
    // On a coloured bottom a shadow still cancels in ratios.
    expect(relativeChangeSquared(70, 105, 35, 100, 150, 50)).toBeCloseTo(0, 12);
  });

  it("keeps a dye's change of colour in the difference whatever white glare lies on it", () => {
    const u = new Float64Array([2 / Math.sqrt(6), -1 / Math.sqrt(6), -1 / Math.sqrt(6)]);
    const out = new Float64Array(3);
    const along = (...px: [number, number, number, number, number, number]) => {
      levelDifference(...px, out);
      return out[0]! * u[0]! + out[1]! * u[1]! + out[2]! * u[2]!;
    };
    const plain = along(170, 110, 120, 180, 180, 180);
    expect(plain).toBeGreaterThan(0);
    expect(along(210, 150, 160, 180, 180, 180)).toBeCloseTo(plain, 12);
    levelDifference(170, 110, 120, 180, 180, 180, out);
    [-10, -70, -60].forEach((d, c) => expect(out[c]! * 180).toBeCloseTo(d, 9));
  });

  it("decides the threshold without a division exactly as the squared change does", () => {
    let state = 7;
    const next = () => (state = (state * 1103515245 + 12345) % 2 ** 31) % 256;
    for (let i = 0; i < 2000; i++) {
      const px = [next(), next(), next(), next(), next(), next()] as const;
      const level = (next() / 255) * 0.6;
      const squared = relativeChangeSquared(...px);
      // Values on the boundary itself may round either way.
      if (Math.abs(squared - level * level) < 1e-9) continue;
      expect(relativeChangeAbove(...px, level)).toBe(squared > level * level);
    }
  });
});

describe("which dye finds of one frame are patches of their own", () => {
  const at = (x: number, y: number, intensity = 80): Detection => ({ x, y, area: 100, roundness: 0.5, intensity, spread: { xx: 25, xy: 0, yy: 4 } });

  it("drops a find under half the strongest's change (a shadow) and one inside a stronger patch's 2 σ (the same patch again)", () => {
    const kept = distinctPatches([
      { detection: at(50, 50), change: 0.3 },
      { detection: at(80, 40), change: 0.14 },
      { detection: at(55, 51), change: 0.25 },
    ]);
    expect(kept).toEqual([at(50, 50)]);
  });

  it("keeps two patches of like strength apart from each other", () => {
    const kept = distinctPatches([
      { detection: at(50, 50), change: 0.3 },
      { detection: at(90, 50), change: 0.2 },
    ]);
    expect(kept).toHaveLength(2);
  });
});

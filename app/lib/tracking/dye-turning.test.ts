/**
 * A dye patch over a tank bottom whose grid turns through a lab-fixed view, in exact (noiseless)
 * colour images: the still background (a per-pixel median) smears the turning spokes, so a spoke
 * crossing the patch is in the frame but not in the background; the turning model (turned back
 * about the centre, its median taken, turned forward, each channel alike) holds it. The dye
 * absorbs by Beer–Lambert's law (common practice for a dye in water), as in dye-clutter.test.ts.
 */
import { describe, expect, it } from "vitest";
import { medianInto, patchExclusionSigmas, type BackgroundExclusion } from "./background";
import { fillChannelsFromSurroundings, minimumFreeSamples } from "./background-fill";
import { createDyeCentre } from "./dye-centre";
import { planDetection } from "./plan";
import { meanSquareMisfit, ringMedians, turnBack, turnExclusions, turningPixels, type TurnInView } from "./turning-background";
import { backgroundAt } from "./turning-compose";
import { discPixels } from "./turning-geometry";

const size = 161;
const pixels = size * size;
/** A lab-fixed camera sees the table turn at Ω = 1.047 s⁻¹: an image angle rate of −Ω (rows down). */
const turn: TurnInView = { cx: 80, cy: 80, r: 76, rate: -1.0471975511965976 };
/** The bottom's colour: a warm grey. */
const bottom = [186, 180, 168];
/** Absorbance per channel at the patch's peak: a pink-red dye. */
const absorbance = [0.05, 0.5, 0.4];
/** The patch: a 3:1 Gaussian ellipse, σ 6 × 2 px, its long axis turned 0.5 rad. */
const sigmaAlong = 6;
const sigmaAcross = 2;
const axis = 0.5;

/** The light a turning spoke lets through at an image angle (spokes 35 % dark, 6 of them, about 3 px wide at half depth 50 px out). */
function spokeLight(col: number, row: number, angle: number): number {
  const dx = col - turn.cx;
  const dy = row - turn.cy;
  const radius = Math.hypot(dx, dy);
  const theta = Math.atan2(dy, dx) - angle;
  return 1 - 0.35 * Math.min(1, radius / 20) * Math.max(0, Math.cos(6 * theta)) ** 40;
}

function amount(col: number, row: number, at: { x: number; y: number }): number {
  const dx = col - at.x;
  const dy = row - at.y;
  const u = dx * Math.cos(axis) + dy * Math.sin(axis);
  const v = -dx * Math.sin(axis) + dy * Math.cos(axis);
  return Math.exp(-0.5 * ((u / sigmaAlong) ** 2 + (v / sigmaAcross) ** 2));
}

/** A frame whose table stands at image angle `angle`, the patch at `at` (or none). */
function frame(angle: number, at: { x: number; y: number } | null): Uint8Array {
  const out = new Uint8Array(pixels * 3);
  for (let row = 0; row < size; row++) {
    for (let col = 0; col < size; col++) {
      const light = spokeLight(col, row, angle);
      const dye = at ? amount(col, row, at) : 0;
      for (let c = 0; c < 3; c++) out[3 * (row * size + col) + c] = Math.round(bottom[c]! * light * Math.exp(-absorbance[c]! * dye));
    }
  }
  return out;
}

/** The patch's ellipse left out of a sample, as tracerExclusions gives it for a measured patch (2 px margin). */
function exclusion(sample: number, at: { x: number; y: number }): BackgroundExclusion {
  const cos = Math.cos(axis);
  const sin = Math.sin(axis);
  const a = sigmaAlong ** 2;
  const b = sigmaAcross ** 2;
  return {
    sample,
    x: at.x,
    y: at.y,
    r: patchExclusionSigmas,
    shape: { xx: a * cos * cos + b * sin * sin + 4, xy: (a - b) * cos * sin, yy: a * sin * sin + b * cos * cos + 4 },
  };
}

/** Where the patch lies in sample j: along a slow circle in the view, never twice at one place of the table. */
function patchAt(j: number): { x: number; y: number } {
  return { x: 80 + 40 * Math.cos(0.9 + 0.23 * j), y: 80 + 40 * Math.sin(0.9 + 0.23 * j) };
}

/** The median with the patches left out, filled in from its surroundings where too few samples are free (as stack-background.ts makes it). */
function median(frames: Uint8Array[], discs: BackgroundExclusion[]): Uint8Array {
  const out = new Uint8Array(pixels * 3);
  const used = new Uint8Array(pixels);
  medianInto(frames, out, 0, pixels, { width: size, discs }, used, 3);
  fillChannelsFromSurroundings(out, used, size, 3, minimumFreeSamples(frames.length));
  return out;
}

describe("a dye patch over a grid turning through a lab-fixed view", () => {
  const times = Array.from({ length: 21 }, (_, j) => j * 0.4);
  const angles = times.map((t) => turn.rate * t);
  const samples = angles.map((a, j) => frame(a, patchAt(j)));
  const discs = samples.map((_, j) => exclusion(j, patchAt(j)));
  const still = median(samples, discs);
  const turned = samples.map((s, j) => {
    const out = new Uint8Array(s.length);
    turnBack(s, size, size, turn, angles[j]!, out, 3);
    return out;
  });
  const turning = median(turned, turnExclusions(discs, turn, angles));
  const model = { turn, turning, rings: ringMedians(turning, size, turn, 3), pixels: discPixels(turn, size, size) };
  // The patch at the searched frame: a spoke crosses it 3 px off its centre, along its long axis.
  const t = 3.3;
  const angle = turn.rate * t;
  const spokeAngle = angle + Math.PI / 3;
  const truth = { x: 80 + 45 * Math.cos(spokeAngle) + 3 * Math.cos(axis), y: 80 + 45 * Math.sin(spokeAngle) + 3 * Math.sin(axis) };
  const image = frame(angle, truth);
  const composed = new Uint8Array(image.length);
  backgroundAt(still, model, image, size, size, angle, composed);
  const spans = new Int32Array(2 * size);
  for (let row = 0; row < size; row++) {
    const half = Math.sqrt(Math.max(0, turn.r ** 2 - (row - turn.cy) ** 2));
    spans[2 * row] = Math.ceil(turn.cx - half);
    spans[2 * row + 1] = Math.floor(turn.cx + half) + 1;
  }
  const box = { col0: Math.floor(truth.x) - 12, row0: Math.floor(truth.y) - 10, col1: Math.floor(truth.x) + 13, row1: Math.floor(truth.y) + 11 };
  const centreOn = (background: Uint8Array, bottomFrom?: Uint8Array) => {
    const found = createDyeCentre(size, size, spans)({ data: image, width: size, height: size }, background, box, undefined, bottomFrom);
    expect(found).not.toBeNull();
    return Math.hypot(found!.x - truth.x, found!.y - truth.y);
  };

  it("finds that something turns: the still model misfits the samples over more than 2 % of the disc", () => {
    const misfit = new Float32Array(pixels);
    meanSquareMisfit(samples, still, size, 0, pixels, discs, misfit, 1, 3);
    expect(turningPixels(misfit, size, turn)).not.toBeNull();
  });

  it("holds the spoke round the patch: 40–70 px from the centre (nearer, the spokes narrow to a couple of pixels) and beyond 12 px of the patch every channel is within 10 grey levels (the spokes are 65 deep), where the still model leaves over 40", () => {
    let composedWorst = 0;
    let stillWorst = 0;
    for (let row = 0; row < size; row++) {
      for (let col = 0; col < size; col++) {
        const radius = Math.hypot(col - turn.cx, row - turn.cy);
        if (radius < 40 || radius > 70 || Math.hypot(col - truth.x, row - truth.y) < 12) continue;
        for (let c = 0; c < 3; c++) {
          const q = 3 * (row * size + col) + c;
          composedWorst = Math.max(composedWorst, Math.abs(image[q]! - composed[q]!));
          stillWorst = Math.max(stillWorst, Math.abs(image[q]! - still[q]!));
        }
      }
    }
    expect(composedWorst).toBeLessThanOrEqual(10);
    expect(stillWorst).toBeGreaterThan(40);
  });

  it("centres the patch across the spoke: within 0.1 px against the turning model, over 0.4 px against the still model alone", () => {
    const withModel = centreOn(composed, still);
    const stillAlone = centreOn(still);
    expect(withModel).toBeLessThan(0.1);
    expect(stillAlone).toBeGreaterThan(0.4);
  });
});

describe("which dye views get a turning model", () => {
  const setup = {
    tracer: "dye" as const,
    centre: { x: 320, y: 180 },
    tankEdge: { cx: 320, cy: 180, r: 160 },
    mirrored: false,
  };
  it("a lab-fixed camera without tilt marks gets one; with them it does not (a tilted view's model is made for one channel)", () => {
    expect(planDetection({ ...setup, rotation: { omega: 1, cameraMode: "lab" } }, 640, 360).turn).not.toBeNull();
    const tilted = [
      [1.01, 0, -3],
      [0, 0.99, 2],
      [0, 0, 1],
    ] as [[number, number, number], [number, number, number], [number, number, number]];
    expect(planDetection({ ...setup, rotation: { omega: 1, cameraMode: "lab" }, correction: tilted }, 640, 360).turn).toBeNull();
  });
});

/**
 * A tilted view's turning part (Decision 76) on a made-up view: a plane seen through a homography
 * (a camera a few degrees off vertical, the marked centre kept in place), a still grey bottom
 * with dark lines, and a lamp's glare turning about a point 9.4 px from the marked centre in that
 * plane (what a lamp above the water does under a co-rotating camera that is not on the axis). The
 * frames are made as the model reads them: the still bottom's darkness times what the glare lets
 * through.
 */
import { describe, expect, it } from "vitest";
import type { Mat3 } from "../projective/matrix";
import { invert } from "../projective/matrix";
import type { TurningBackground } from "./turning-background";
import { backgroundAt } from "./turning-compose";
import { discPixels, type TurnInView } from "./turning-geometry";
import { departures, findTurningCentre, recentredTurn, turningSpread } from "./turning-centre";
import { turningMedian } from "./turning-median";

const size = 120;
const c0 = { x: 60, y: 60 };
const truthCentre = { x: 68, y: 55 };

/** Image → plane: a perspective part that keeps c0 fixed (first order). */
function homography(): Mat3 {
  const g = 4e-4;
  const h = -2e-4;
  // p ↦ (p − c0·(g(x − c0x) + h(y − c0y))) / (1 + g(x − c0x) + h(y − c0y)): c0 stays, the rest leans.
  return [
    [1 - g * c0.x, -h * c0.x, g * c0.x * c0.x + h * c0.x * c0.y],
    [-g * c0.y, 1 - h * c0.y, g * c0.x * c0.y + h * c0.y * c0.y],
    [g, h, 1 - g * c0.x - h * c0.y],
  ];
}

const H = homography();
const Hinv = invert(H)!;

function toPlane(M: Mat3, x: number, y: number): { x: number; y: number } {
  const w = M[2][0] * x + M[2][1] * y + M[2][2];
  return { x: (M[0][0] * x + M[0][1] * y + M[0][2]) / w, y: (M[1][0] * x + M[1][1] * y + M[1][2]) / w };
}

const still = new Uint8Array(size * size);
for (let row = 0; row < size; row++) {
  for (let col = 0; col < size; col++) still[row * size + col] = col % 17 < 2 || row % 23 < 2 ? 110 : 170;
}

/** The glare's share let through at plane point q when the glare has turned by `angle` about the truth centre. */
function letThrough(q: { x: number; y: number }, angle: number): number {
  const gx = truthCentre.x + 25 * Math.cos(angle);
  const gy = truthCentre.y + 25 * Math.sin(angle);
  return 1 - 0.85 * Math.exp(-((q.x - gx) ** 2 + (q.y - gy) ** 2) / (2 * 7 * 7));
}

function frameAt(angle: number): Uint8Array {
  const out = new Uint8Array(size * size);
  for (let row = 0; row < size; row++) {
    for (let col = 0; col < size; col++) {
      const p = row * size + col;
      out[p] = Math.round(255 - (255 - still[p]!) * letThrough(toPlane(H, col, row), angle));
    }
  }
  return out;
}

const angles = Array.from({ length: 21 }, (_, j) => 0.41 * j);
const samples = angles.map(frameAt);
/** The plan's turn: rectified, about the marked centre. */
const planned: TurnInView = { cx: c0.x, cy: c0.y, r: 50, rate: 1, rectify: { H, Hinv } };
// The homography keeps c0 in place, so the plan's centre is c0 in the plane as well.
const centreInPlane = toPlane(H, c0.x, c0.y);

describe("the turning centre of a tilted view", () => {
  it("the made-up correction keeps the marked centre in place", () => {
    expect(Math.hypot(centreInPlane.x - c0.x, centreInPlane.y - c0.y)).toBeLessThan(1e-9);
  });

  it("is found where the glare turns about, within 0.5 px, and the departures agree five times better there than about the marked centre", () => {
    const deps = departures(samples, still);
    const found = findTurningCentre(deps, size, size, planned, angles, 20);
    expect(Math.hypot(found.x - truthCentre.x, found.y - truthCentre.y)).toBeLessThanOrEqual(0.5);
    // Not zero at the truth: a departure over a dark line is larger than over the bottom (the glare multiplies darkness).
    expect(found.spread).toBeLessThan(0.2 * found.spreadAtPlan);
    expect(turningSpread(deps, size, size, planned, angles, truthCentre, 4)).toBeLessThan(0.2 * found.spreadAtPlan);
  });

  it("gives a background that matches a frame at a new angle within 3 grey levels, where the marked centre leaves over 40", () => {
    const angle = 2.3;
    const frame = frameAt(angle);
    const worst = (turn: TurnInView): number => {
      const factor = turningMedian(samples, still, size, size, turn, angles, []);
      const pixels = discPixels(turn, size, size);
      const model: TurningBackground = { turn, turning: still, rings: new Float32Array(0), pixels, factor };
      const out = new Uint8Array(size * size);
      backgroundAt(still, model, frame, size, size, angle, out);
      let max = 0;
      for (const p of pixels) {
        const col = p % size;
        const row = (p - col) / size;
        // Away from the disc's edge, where a sample may see a point from beyond it.
        if (Math.hypot(col - c0.x, row - c0.y) > 40) continue;
        max = Math.max(max, Math.abs(out[p]! - frame[p]!));
      }
      return max;
    };
    const recentred = recentredTurn(samples, still, size, size, planned, angles);
    expect(recentred.bound).toEqual({ cx: c0.x, cy: c0.y, r: 50 });
    expect(worst(recentred)).toBeLessThanOrEqual(3);
    expect(worst({ ...planned, bound: { cx: c0.x, cy: c0.y, r: 50 } })).toBeGreaterThan(40);
  });
});

import { describe, expect, it } from "vitest";
import { medianBackground } from "./background";
import { planDetection } from "./plan";
import { meanSquareMisfit, ringMedians, turnBack, turnExclusions, turningPixels, turnRateInView, type TurnInView } from "./turning-background";
import { backgroundAt, samplesMisfit } from "./turning-compose";

const width = 121;
const height = 121;
const turn: TurnInView = { cx: 60, cy: 60, r: 56, rate: -1.0471975511965976 };

/**
 * A bottom that turns: six smooth dark spokes, like a grid's (about a fifth of the angles), at
 * `angle` (image angle) on a level of 180, and, when asked, a bright patch that stays put in the view.
 */
function scene(angle: number, still: boolean): Uint8Array {
  const out = new Uint8Array(width * height);
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const dx = col - turn.cx;
      const dy = row - turn.cy;
      const radius = Math.hypot(dx, dy);
      const theta = Math.atan2(dy, dx) - angle;
      // Darkness of the spokes grows with the radius, so every ring has the same angular pattern.
      let value = 180 - 60 * Math.min(1, radius / 20) * Math.max(0, Math.cos(6 * theta)) ** 12;
      if (still) value += 60 * Math.exp(-((col - 85) ** 2 + (row - 40) ** 2) / (2 * 6 ** 2));
      out[row * width + col] = Math.round(Math.min(255, value));
    }
  }
  return out;
}

/** Largest difference between `from` and `within` px of the centre. */
function largestDifference(a: Uint8Array, b: Uint8Array, within: number, from = 25): number {
  let largest = 0;
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const radius = Math.hypot(col - turn.cx, row - turn.cy);
      if (radius > within || radius < from) continue;
      largest = Math.max(largest, Math.abs(a[row * width + col]! - b[row * width + col]!));
    }
  }
  return largest;
}

describe("the turning background model", () => {
  it("turns the table's Ω into the image angle of what turns in view (rows down; a mirror flips it)", () => {
    const omega = 1;
    // Lab-fixed camera: the table turns counter-clockwise seen from above, a negative image angle.
    expect(turnRateInView(omega, "lab", false)).toBe(-1);
    expect(turnRateInView(omega, "lab", true)).toBe(1);
    // Co-rotating camera: the room turns the other way.
    expect(turnRateInView(omega, "rotating", false)).toBe(1);
    expect(turnRateInView(-omega, "rotating", true)).toBe(1);
  });

  // Turning a spoke back and forth by bilinear interpolation leaves a few grey levels along its
  // edges; within 25 px of the centre the spokes narrow to a few pixels and it leaves up to a dozen.
  it("makes a turned pattern vanish: beyond 25 px of the centre a frame minus its background leaves at most 8 grey levels (the spokes are 60)", () => {
    const times = Array.from({ length: 21 }, (_, j) => j * 0.4);
    const angles = times.map((t) => turn.rate * t);
    const samples = angles.map((a) => scene(a, false));
    const still = medianBackground(samples);
    const misfit = new Float32Array(width * height);
    meanSquareMisfit(samples, still, width, 0, width * height, [], misfit);
    const pixels = turningPixels(misfit, width, turn);
    expect(pixels).not.toBeNull();
    const turned = samples.map((s, j) => {
      const out = new Uint8Array(s.length);
      turnBack(s, width, height, turn, angles[j]!, out);
      return out;
    });
    const turning = medianBackground(turned);
    const model = { turn, turning, rings: ringMedians(turning, width, turn), pixels: pixels! };
    // A frame between the samples' angles.
    const t = 3.3;
    const frame = scene(turn.rate * t, false);
    const background = new Uint8Array(frame.length);
    backgroundAt(still, model, frame, width, height, turn.rate * t, background);
    expect(largestDifference(frame, background, turn.r - 2)).toBeLessThanOrEqual(8);
    // The still median alone leaves the spokes in the difference.
    expect(largestDifference(frame, still, turn.r - 2)).toBeGreaterThan(30);
  });

  it("keeps a patch that stands still in the view while the bottom turns under it", () => {
    const times = Array.from({ length: 21 }, (_, j) => j * 0.4);
    const angles = times.map((t) => turn.rate * t);
    const samples = angles.map((a) => scene(a, true));
    const still = medianBackground(samples);
    const misfit = new Float32Array(width * height);
    meanSquareMisfit(samples, still, width, 0, width * height, [], misfit);
    const pixels = turningPixels(misfit, width, turn)!;
    const turned = samples.map((s, j) => {
      const out = new Uint8Array(s.length);
      turnBack(s, width, height, turn, angles[j]!, out);
      return out;
    });
    const turning = medianBackground(turned);
    const model = { turn, turning, rings: ringMedians(turning, width, turn), pixels };
    const t = 5.1;
    const frame = scene(turn.rate * t, true);
    const background = new Uint8Array(frame.length);
    backgroundAt(still, model, frame, width, height, turn.rate * t, background);
    // The patch (60 grey levels) and the spokes under it are both explained to within 8 levels.
    expect(largestDifference(frame, background, turn.r - 2)).toBeLessThanOrEqual(8);
  });

  it("leaves the still model alone when nothing turns: the samples differ by noise only", () => {
    const samples = Array.from({ length: 21 }, (_, j) => {
      const frame = scene(0, true);
      // A fixed, deterministic ±2 dither per sample, like noise.
      for (let p = 0; p < frame.length; p++) frame[p] = frame[p]! + (((p * 7 + j * 13) % 5) - 2);
      return frame;
    });
    const still = medianBackground(samples);
    const misfit = new Float32Array(width * height);
    meanSquareMisfit(samples, still, width, 0, width * height, [], misfit);
    expect(turningPixels(misfit, width, turn)).toBeNull();
  });

  it("moves a sample's exclusion disc to where turnBack puts the same point", () => {
    const angle = 0.7;
    const [moved] = turnExclusions([{ sample: 0, x: 90, y: 50, r: 5 }], turn, [angle]);
    // turnBack reads the frame at c + R(angle)(q − c): the disc's centre must come back to (90, 50).
    const dx = moved!.x - turn.cx;
    const dy = moved!.y - turn.cy;
    expect(turn.cx + Math.cos(angle) * dx - Math.sin(angle) * dy).toBeCloseTo(90, 9);
    expect(turn.cy + Math.sin(angle) * dx + Math.cos(angle) * dy).toBeCloseTo(50, 9);
  });

  it("explains the samples far better than the still model when the pattern turns about the plan's centre, and not when it turns about another point", () => {
    const angles = Array.from({ length: 21 }, (_, j) => turn.rate * j * 0.4);
    const build = (centre: { x: number; y: number }) => {
      const samples = angles.map((a) => {
        const frame = scene(a, false);
        if (centre.x === turn.cx && centre.y === turn.cy) return frame;
        // The same pattern turning about a point 6 px away (as a tilted camera sees the bottom).
        const moved = new Uint8Array(frame.length);
        for (let row = 0; row < height; row++) {
          for (let col = 0; col < width; col++) {
            const c = Math.min(width - 1, Math.max(0, col - (centre.x - turn.cx)));
            const r = Math.min(height - 1, Math.max(0, row - (centre.y - turn.cy)));
            moved[row * width + col] = frame[Math.round(r) * width + Math.round(c)]!;
          }
        }
        return moved;
      });
      const still = medianBackground(samples);
      const misfit = new Float32Array(width * height);
      meanSquareMisfit(samples, still, width, 0, width * height, [], misfit);
      const pixels = turningPixels(misfit, width, turn)!;
      const turned = samples.map((sample, j) => {
        const out = new Uint8Array(sample.length);
        turnBack(sample, width, height, turn, angles[j]!, out);
        return out;
      });
      const turning = medianBackground(turned);
      return samplesMisfit(samples, still, { turn, turning, rings: ringMedians(turning, width, turn), pixels }, width, height, angles);
    };
    const about = build({ x: turn.cx, y: turn.cy });
    expect(about.combined).toBeLessThan(0.1 * about.still);
    const elsewhere = build({ x: turn.cx + 6, y: turn.cy });
    expect(elsewhere.combined).toBeGreaterThan(0.5 * elsewhere.still);
  });

  it("is planned for a float with a tank edge and a turning table, at −Ω under a lab-fixed camera; for dye under a lab-fixed camera only; not without a rate", () => {
    const base = { tracer: "float" as const, centre: { x: 60, y: 50 }, tankEdge: { cx: 60, cy: 50, r: 40 }, mirrored: false };
    const lab = planDetection({ ...base, rotation: { omega: 1.2, cameraMode: "lab" } }, 160, 120);
    expect(lab.turn).toMatchObject({ cx: 40, cy: 40, rate: -1.2 });
    expect(lab.turn!.r).toBeGreaterThan(30);
    expect(planDetection({ ...base, rotation: { omega: 1.2, cameraMode: "rotating" } }, 160, 120).turn!.rate).toBe(1.2);
    expect(planDetection({ ...base, tracer: "dye", rotation: { omega: 1.2, cameraMode: "lab" } }, 160, 120).turn).toEqual(lab.turn);
    expect(planDetection({ ...base, tracer: "dye", rotation: { omega: 1.2, cameraMode: "rotating" } }, 160, 120).turn).toBeNull();
    expect(planDetection(base, 160, 120).turn).toBeNull();
    expect(planDetection({ ...base, rotation: { omega: 0, cameraMode: "lab" } }, 160, 120).turn).toBeNull();
  });
});

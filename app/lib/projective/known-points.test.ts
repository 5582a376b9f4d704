import { describe, expect, it } from "vitest";
import { tiltedCamera } from "../../../tests/fixtures/tilted-camera";
import { GeometryError } from "./geometry-error";
import { knownPointsFit, knownPointsProblem, type KnownPoint, type KnownPointEntry } from "./known-points";
import { viewCorrection } from "./view-correction";

/** Marks on the table (cm) seen by an exact pinhole camera tilted 6° towards table azimuth 90° (the frame's top). */
const camera = tiltedCamera(6, 90);
const marks = [
  { x: 10, y: 0 },
  { x: 0, y: 10 },
  { x: -10, y: 0 },
  { x: 0, y: -10 },
  { x: 7, y: 7 },
];
const seen = (table: readonly { x: number; y: number }[]): KnownPoint[] => table.map((t) => ({ ...camera.project(t), tableXCm: t.x, tableYCm: t.y }));

describe("known points checked in words", () => {
  const four = seen(marks.slice(0, 4));
  it("accepts four points spread round the tank", () => {
    expect(knownPointsProblem(four)).toBeNull();
  });
  it("names a point whose table position is not a number yet", () => {
    const entries: KnownPointEntry[] = four.map((p, i) => (i === 2 ? { ...p, tableYCm: null } : p));
    expect(knownPointsProblem(entries)).toBe("Known point 3 needs its place on the table: x and y in cm, as numbers.");
    expect(knownPointsProblem([{ ...four[0]!, tableXCm: Number.NaN }, ...four.slice(1)])).toMatch(/^Known point 1 needs/);
  });
  it("asks for four or more", () => {
    expect(knownPointsProblem(four.slice(0, 3))).toBe("A correction from known points needs at least 4 of them; 3 are placed.");
  });
  it("names two clicks on one spot, and two points given one place on the table", () => {
    expect(knownPointsProblem([...four, { ...four[1]!, x: four[1]!.x + 0.5, tableXCm: 3, tableYCm: 3 }])).toBe(
      "Known points 2 and 5 are on the same spot of the frame; remove one and click another mark.",
    );
    expect(knownPointsProblem([...four.slice(0, 3), { ...four[3]!, tableXCm: 10, tableYCm: 0 }])).toBe(
      "Known points 1 and 4 are given the same place on the table; check the positions you typed.",
    );
  });
  it("refuses points in one line, in the frame or on the table", () => {
    const line = [0, 1, 2, 3].map((i) => ({ x: 100 + 50 * i, y: 100 + 20 * i, tableXCm: [10, 0, -10, 0][i]!, tableYCm: [0, 10, 0, -10][i]! }));
    expect(knownPointsProblem(line)).toBe("The known points lie in one line in the frame; pick marks spread around the tank.");
    const typed = four.map((p, i) => ({ ...p, tableXCm: 2 * i, tableYCm: 4 * i }));
    expect(knownPointsProblem(typed)).toBe("The table positions typed lie in one line; pick marks spread around the tank.");
  });
  it("the correction refuses them with the same words", () => {
    expect(() => viewCorrection({ kind: "known", points: four.slice(0, 3) }, camera.project({ x: 0, y: 0 }), false)).toThrow(
      new GeometryError("A correction from known points needs at least 4 of them; 3 are placed."),
    );
  });
});

describe("the known points' fit for the overlay", () => {
  it("reads the 6° lean from four exact points, and sends each table position back onto its click", () => {
    const points = seen(marks.slice(0, 4));
    const correction = viewCorrection({ kind: "known", points }, camera.project({ x: 0, y: 0 }), false);
    expect(correction.summary.tiltDeg).toBeCloseTo(6, 6);
    const fit = knownPointsFit(points, false);
    for (const p of fit.points) expect(p.offPx).toBeLessThan(1e-6);
    expect(fit.residualPx).toBeLessThan(1e-6);
  });
  it("draws the table's grid where the camera sees it: a grid line through the projected table points", () => {
    const fit = knownPointsFit(seen(marks), false);
    // Reach 10 cm → a 5 cm step out to 10 cm; the line x = 5 cm runs through the images of (5, ±8.66) cm.
    expect(fit.grid.stepCm).toBe(5);
    expect(fit.grid.radiusCm).toBe(10);
    const a = camera.project({ x: 5, y: -Math.sqrt(75) });
    const b = camera.project({ x: 5, y: Math.sqrt(75) });
    const near = (p: { x: number; y: number }, q: { x: number; y: number }) => Math.hypot(p.x - q.x, p.y - q.y) < 1e-6;
    const line = fit.grid.lines.find(([p, q]) => (near(p, a) && near(q, b)) || (near(p, b) && near(q, a)));
    expect(line).toBeDefined();
    for (const p of fit.grid.circle) {
      // Every point of the drawn circle is the image of a point 10 cm from the axis: it lies on the circle's image.
      const onImage = Array.from({ length: 720 }, (_, i) => camera.project({ x: 10 * Math.cos((i * Math.PI) / 360), y: 10 * Math.sin((i * Math.PI) / 360) }));
      expect(Math.min(...onImage.map((q) => Math.hypot(q.x - p.x, q.y - p.y)))).toBeLessThan(0.5);
    }
  });
  it("shows a mistyped fifth point as an offset from its click, with the residual in px", () => {
    const points = seen(marks);
    points[4] = { ...points[4]!, tableXCm: 8 }; // typed 8 instead of 7
    const fit = knownPointsFit(points, false);
    const worst = Math.max(...fit.points.map((p) => p.offPx));
    expect(worst).toBeGreaterThan(3);
    expect(fit.residualPx).toBeCloseTo(Math.sqrt(fit.points.reduce((s, p) => s + p.offPx ** 2, 0) / 5), 12);
  });
});

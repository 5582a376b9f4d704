import { describe, expect, it } from "vitest";
import { fitEllipse } from "./ellipse-fit";
import { GeometryError } from "./geometry-error";
import { gaussian, seededRandom } from "../random";

function onEllipse(cx: number, cy: number, a: number, b: number, angleDeg: number, params: readonly number[]) {
  const phi = (angleDeg * Math.PI) / 180;
  return params.map((t) => ({
    x: cx + a * Math.cos(t) * Math.cos(phi) - b * Math.sin(t) * Math.sin(phi),
    y: cy + a * Math.cos(t) * Math.sin(phi) + b * Math.sin(t) * Math.cos(phi),
  }));
}

const twelve = Array.from({ length: 12 }, (_, i) => (i * 2 * Math.PI) / 12);

describe("fitEllipse (Fitzgibbon, Pilu & Fisher 1999; Halíř & Flusser 1998)", () => {
  it("recovers an ellipse exactly from twelve points on it", () => {
    const e = fitEllipse(onEllipse(331.5, 176.25, 168, 151.2, 30, twelve));
    expect(e.centre.x).toBeCloseTo(331.5, 8);
    expect(e.centre.y).toBeCloseTo(176.25, 8);
    expect(e.a).toBeCloseTo(168, 8);
    expect(e.b).toBeCloseTo(151.2, 8);
    expect((e.angle * 180) / Math.PI).toBeCloseTo(30, 6);
    expect(e.rmsResidual).toBeLessThan(1e-8);
  });

  it("needs only five points, bunched on one side, when they are exact", () => {
    const e = fitEllipse(onEllipse(100, 80, 40, 25, -70, [0, 0.4, 0.9, 1.3, 2]));
    expect(e.centre.x).toBeCloseTo(100, 6);
    expect(e.centre.y).toBeCloseTo(80, 6);
    expect(e.a).toBeCloseTo(40, 6);
    expect(e.b).toBeCloseTo(25, 6);
    expect((e.angle * 180) / Math.PI).toBeCloseTo(-70, 4);
  });

  it("a nearly circular rim (5° of tilt) keeps its axis ratio to 1e-9", () => {
    const ratio = Math.cos((5 * Math.PI) / 180);
    const e = fitEllipse(onEllipse(320, 180, 168, 168 * ratio, 120, twelve));
    expect(e.b / e.a).toBeCloseTo(ratio, 9);
    expect((e.angle * 180) / Math.PI).toBeCloseTo(-60, 5);
  });

  it("with 0.3 px of noise on twelve points the centre stays within 0.3 px and the axes within 0.5 %", () => {
    const normal = gaussian(seededRandom(16));
    const pts = onEllipse(320, 180, 168, 150, 10, twelve).map((p) => ({ x: p.x + 0.3 * normal(), y: p.y + 0.3 * normal() }));
    const e = fitEllipse(pts);
    expect(Math.hypot(e.centre.x - 320, e.centre.y - 180)).toBeLessThan(0.3);
    expect(Math.abs(e.a / 168 - 1)).toBeLessThan(0.005);
    expect(Math.abs(e.b / 150 - 1)).toBeLessThan(0.005);
    expect(e.rmsResidual).toBeGreaterThan(0.05);
    expect(e.rmsResidual).toBeLessThan(0.6);
  });

  it("refuses fewer than five points, points in a line, and points on one spot, in words", () => {
    const four = onEllipse(0, 0, 10, 5, 0, [0, 1, 2, 3]);
    expect(() => fitEllipse(four)).toThrow(GeometryError);
    expect(() => fitEllipse(four)).toThrow(/at least five points.*4 were given/);
    const line = [0, 1, 2, 3, 4, 5].map((i) => ({ x: 10 + 3 * i, y: 20 + 2 * i }));
    expect(() => fitEllipse(line)).toThrow(/lie in a line/);
    expect(() => fitEllipse(Array.from({ length: 6 }, () => ({ x: 5, y: 5 })))).toThrow(/one spot/);
    expect(() => fitEllipse([...four, { x: NaN, y: 1 }])).toThrow(/column and a row/);
  });

  it("points on a hyperbola still give an ellipse (the fit is ellipse-specific), with a residual that shows it fits badly", () => {
    const hyperbola = [-2, -1, -0.5, 0.5, 1, 2].map((t) => ({ x: 100 + 30 * Math.cosh(t), y: 100 + 20 * Math.sinh(t) }));
    const e = fitEllipse(hyperbola);
    expect(e.b).toBeGreaterThan(0);
    expect(Number.isFinite(e.centre.x) && Number.isFinite(e.centre.y)).toBe(true);
    expect(e.rmsResidual).toBeGreaterThan(1);
  });
});

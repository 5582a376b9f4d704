import { describe, expect, it } from "vitest";
import { homographyFromPairs, project } from "./homography";
import { GeometryError } from "./geometry-error";
import { mat3 } from "./matrix";

const H0 = mat3([
  [1.02, 0.03, 12],
  [-0.02, 0.97, -7],
  [0.0004, -0.0003, 1],
]);

describe("homographyFromPairs (normalised DLT, Hartley & Zisserman 2004, §4.4)", () => {
  it("four exact pairs give the homography back, to 1e-9 in every entry", () => {
    const from = [
      { x: 10, y: 20 },
      { x: 600, y: 30 },
      { x: 590, y: 340 },
      { x: 25, y: 330 },
    ];
    const H = homographyFromPairs(from.map((p) => ({ from: p, to: project(H0, p)! })));
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expect(H[i]![j]!).toBeCloseTo(H0[i]![j]!, 9);
  });

  it("a worked example: the unit square onto a trapezium maps its middle to where the diagonals meet", () => {
    const square = [
      { x: 0, y: 0 },
      { x: 1, y: 0 },
      { x: 1, y: 1 },
      { x: 0, y: 1 },
    ];
    const trapezium = [
      { x: 0, y: 0 },
      { x: 4, y: 0 },
      { x: 3, y: 2 },
      { x: 1, y: 2 },
    ];
    const H = homographyFromPairs(square.map((p, i) => ({ from: p, to: trapezium[i]! })));
    // The diagonals (0,0)–(3,2) and (4,0)–(1,2) meet at (2, 4/3); a homography keeps incidence.
    const mid = project(H, { x: 0.5, y: 0.5 })!;
    expect(mid.x).toBeCloseTo(2, 10);
    expect(mid.y).toBeCloseTo(4 / 3, 10);
  });

  it("more than four pairs are fitted in the least-squares sense", () => {
    const from = Array.from({ length: 9 }, (_, i) => ({ x: 50 + (i % 3) * 250, y: 30 + Math.floor(i / 3) * 140 }));
    const H = homographyFromPairs(from.map((p) => ({ from: p, to: project(H0, p)! })));
    const q = project(H, { x: 333, y: 111 })!;
    const r = project(H0, { x: 333, y: 111 })!;
    expect(Math.hypot(q.x - r.x, q.y - r.y)).toBeLessThan(1e-8);
  });

  it("refuses three points, three of four in a line, and repeated points, in words", () => {
    const p = (x: number, y: number) => ({ from: { x, y }, to: { x: x / 10, y: y / 10 } });
    expect(() => homographyFromPairs([p(0, 0), p(10, 0), p(0, 10)])).toThrow(/at least four.*3 were given/);
    expect(() => homographyFromPairs([p(0, 0), p(10, 0), p(20, 0), p(0, 10)])).toThrow(GeometryError);
    expect(() => homographyFromPairs([p(0, 0), p(10, 0), p(20, 0), p(0, 10)])).toThrow(/in a line/);
    expect(() => homographyFromPairs([p(5, 5), p(5, 5), p(5, 5), p(5, 5)])).toThrow(/one spot/);
    expect(() => homographyFromPairs([p(0, 0), p(10, 0), p(10, 10), p(0, 10), p(0, 0)].slice(0, 4).concat([p(Number.NaN, 0)]))).toThrow(/numbers/);
  });
});

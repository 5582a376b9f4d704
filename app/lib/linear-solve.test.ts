import { describe, expect, it } from "vitest";
import { invertMatrix, solveLinear } from "./linear-solve";

describe("small dense linear systems", () => {
  it("solves a system that needs a row exchange (a zero first pivot) exactly", () => {
    // x = (1, 2, 3): the first column's largest entry is in the second row.
    const a = [0, 2, 1, 4, 1, 0, 1, 1, 1];
    const x = solveLinear(a, [7, 6, 6], 3);
    expect(x).not.toBeNull();
    [1, 2, 3].forEach((v, i) => expect(x![i]).toBeCloseTo(v, 12));
  });

  it("refuses a singular system (a repeated row) with null rather than numbers", () => {
    expect(solveLinear([1, 2, 2, 4], [1, 2], 2)).toBeNull();
    expect(invertMatrix([1, 2, 2, 4], 2)).toBeNull();
  });

  it("inverts a symmetric matrix: the product with the matrix is the identity", () => {
    const a = [4, 1, 2, 1, 3, 0, 2, 0, 5];
    const inv = invertMatrix(a, 3)!;
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) {
        let s = 0;
        for (let k = 0; k < 3; k++) s += a[i * 3 + k]! * inv[k * 3 + j]!;
        expect(s).toBeCloseTo(i === j ? 1 : 0, 12);
      }
    }
  });
});

import { describe, expect, it } from "vitest";
import { unwrapAngles, wrapAngle } from "./angles";

describe("angles", () => {
  it("unwraps angles across ±π", () => {
    expect(unwrapAngles([3, -3, -2.5, 3.1])).toEqual([3, -3 + 2 * Math.PI, -2.5 + 2 * Math.PI, 3.1]);
  });

  it("follows a direction turning clockwise through three whole turns", () => {
    const truth = Array.from({ length: 200 }, (_, i) => 1 - 0.1 * i);
    const unwrapped = unwrapAngles(truth.map((a) => Math.atan2(Math.sin(a), Math.cos(a))));
    unwrapped.forEach((a, i) => expect(a).toBeCloseTo(truth[i]!, 12));
    expect(unwrapAngles([])).toEqual([]);
  });

  it("gives the principal value of a turn in (−π, π]", () => {
    expect(wrapAngle((3 * Math.PI) / 2)).toBeCloseTo(-Math.PI / 2, 15);
    expect(wrapAngle(-0.3 - 4 * Math.PI)).toBeCloseTo(-0.3, 12);
    expect(wrapAngle(0.25)).toBeCloseTo(0.25, 15);
  });
});

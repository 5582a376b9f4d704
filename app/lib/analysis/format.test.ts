import { describe, expect, it } from "vitest";
import { percentRange } from "./format";

describe("a verdict's interval in words", () => {
  it("gives the two ends of a narrow interval enough decimals to differ", () => {
    expect(percentRange(0.1072, 0.1102)).toBe("10.7% to 11.0%");
    expect(percentRange(0.10721, 0.10742)).toBe("10.72% to 10.74%");
  });
  it("keeps one decimal on wide intervals and writes a true minus sign", () => {
    expect(percentRange(-0.0093, 0.0112)).toBe("−0.9% to 1.1%");
    expect(percentRange(-0.25, 0.4)).toBe("−25.0% to 40.0%");
  });
  it("says nothing numeric for an interval that is not finite", () => {
    expect(percentRange(Number.NaN, 0.1)).toBe("—");
  });
});

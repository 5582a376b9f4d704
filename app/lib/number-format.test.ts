import { describe, expect, it } from "vitest";
import { formatCentimetres, formatFixed, formatNumber, formatWithError, percentRange } from "./number-format";

describe("numbers to significant digits", () => {
  it("rounds to the digits asked for and drops trailing zeros", () => {
    expect(formatNumber(1.0471975511965976)).toBe("1.047");
    expect(formatNumber(2.5, 4)).toBe("2.5");
    expect(formatNumber(9.95, 2)).toBe("10");
    expect(formatNumber(-0.0123456, 3)).toBe("-0.0123");
    expect(formatNumber(0)).toBe("0");
  });
  it("writes no thousands separator, so a figure can be pasted beside the CSV", () => {
    expect(formatNumber(123456.7, 7)).toBe("123456.7");
    expect(formatNumber(612.04, 5)).toBe("612.04");
  });
  it("uses the exponent form below 0.001 and from a million, with its sign", () => {
    expect(formatNumber(1.5e-4, 4)).toBe("1.5e-4");
    expect(formatNumber(-7.292115e-5, 3)).toBe("-7.29e-5");
    expect(formatNumber(2345678, 3)).toBe("2.35e+6");
    expect(formatNumber(999999, 3)).toBe("1000000");
  });
  it("gives a dash for no number", () => {
    expect(formatNumber(null)).toBe("—");
    expect(formatNumber(undefined)).toBe("—");
    expect(formatNumber(Number.NaN)).toBe("—");
    expect(formatNumber(Number.POSITIVE_INFINITY)).toBe("—");
  });
});

describe("fixed fraction digits", () => {
  it("pads to the digits asked for and never writes a negative zero", () => {
    expect(formatFixed(10, 2)).toBe("10.00");
    expect(formatFixed(0.980392, 5)).toBe("0.98039");
    expect(formatFixed(-0.0001, 3)).toBe("0.000");
    expect(formatFixed(-0.5, 1)).toBe("-0.5");
  });
  it("rounds a halfway case on the decimal as written", () => {
    expect(formatFixed(1.0005, 3)).toBe("1.001");
  });
});

describe("a value with its standard error", () => {
  it("shows both to the error's second significant digit", () => {
    expect(formatWithError(10.0412, 0.0123, 2)).toBe("10.041 ± 0.012");
    expect(formatWithError(612.04, 1.23)).toBe("612.0 ± 1.2");
    expect(formatWithError(2.0944, 0.00031)).toBe("2.09440 ± 0.00031");
  });
  it("keeps at least the decimals asked for", () => {
    expect(formatWithError(10.5, 3.2, 2)).toBe("10.50 ± 3.20");
  });
  it("shows the value alone when the error is zero or unknown, not a false ± 0", () => {
    expect(formatWithError(30.6, 0)).toBe("30.6");
    expect(formatWithError(10.04, Number.NaN, 2)).toBe("10.04");
  });
});

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

describe("lengths in centimetres", () => {
  it("shows a length stored in metres without the float noise of the conversion", () => {
    // 0.57 * 100 is 56.99999999999999 in binary floating point; the seeded tank is 57 cm across.
    expect(0.57 * 100).not.toBe(57);
    expect(formatCentimetres(0.57)).toBe("57 cm");
    expect(formatCentimetres(0.25)).toBe("25 cm");
    expect(formatCentimetres(0.1234567)).toBe("12.35 cm");
    expect(formatCentimetres(0.1234567, 6)).toBe("12.3457 cm");
  });

  it("shows a dash when there is no length", () => {
    expect(formatCentimetres(null)).toBe("—");
    expect(formatCentimetres(undefined)).toBe("—");
    expect(formatCentimetres(Number.NaN)).toBe("—");
  });
});

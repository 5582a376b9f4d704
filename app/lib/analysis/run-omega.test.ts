import { describe, expect, it } from "vitest";
import { omegaFromTableRate, runOmega } from "./run-omega";

describe("Ω from a run (Ω = 2π·rpm/60, counterclockwise from above positive: common practice)", () => {
  it("signs the rate by direction: clockwise seen from above is negative", () => {
    expect(omegaFromTableRate(10, "ccw")).toBeCloseTo(1.0471975511965976, 14);
    expect(omegaFromTableRate(10, "cw")).toBeCloseTo(-1.0471975511965976, 14);
    expect(runOmega({ setRateRpm: 30, direction: "cw" })).toBeCloseTo(-Math.PI, 14);
    expect(runOmega({ setRateRpm: 15, direction: "ccw" })).toBeCloseTo(Math.PI / 2, 14);
  });

  it("gives a table at rest a plain zero, never −0", () => {
    expect(Object.is(omegaFromTableRate(0, "cw"), 0)).toBe(true);
    expect(Object.is(runOmega({ setRateRpm: 0, direction: "cw" }), 0)).toBe(true);
  });

  it("treats a negative or missing rpm, or an unknown direction, as no usable rate", () => {
    expect(Number.isNaN(omegaFromTableRate(-5, "ccw"))).toBe(true);
    expect(Number.isNaN(omegaFromTableRate(Number.NaN, "ccw"))).toBe(true);
    expect(Number.isNaN(runOmega({ setRateRpm: 10, direction: "up" as never }))).toBe(true);
  });
});

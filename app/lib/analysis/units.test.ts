import { describe, expect, it } from "vitest";
import { coriolisAcceleration, coriolisParameter, EARTH_ROTATION_RATE, ONE_TURN_PER_DAY, radPerSToRpm, rpmToRadPerS, STANDARD_GRAVITY } from "./units";

describe("rates", () => {
  it("converts rpm to rad/s as Ω = 2π·rpm/60 and back (common practice)", () => {
    expect(rpmToRadPerS(30)).toBeCloseTo(Math.PI, 14);
    expect(rpmToRadPerS(60)).toBeCloseTo(2 * Math.PI, 14);
    expect(radPerSToRpm(rpmToRadPerS(9.55))).toBeCloseTo(9.55, 12);
  });
});

describe("constants", () => {
  it("uses gₙ = 9.80665 m/s², exact (3rd CGPM 1901; NIST SP 330)", () => {
    expect(STANDARD_GRAVITY).toBe(9.80665);
  });

  it("uses Earth's 7.292115e-5 rad/s (IERS Conventions 2010, Technical Note 36)", () => {
    expect(EARTH_ROTATION_RATE).toBe(7.292115e-5);
  });

  it("one revolution per 86 400 s is about 7.272e-5 rad/s (common practice)", () => {
    expect(ONE_TURN_PER_DAY).toBeCloseTo(7.272e-5, 8);
    expect(ONE_TURN_PER_DAY).toBeLessThan(EARTH_ROTATION_RATE);
  });
});

describe("Coriolis parameter and components at a latitude", () => {
  it("gives f = 1.0313e-4 s⁻¹ at 45° (recomputed from Ω in the IERS Conventions 2010, Petit & Luzum, IERS Technical Note 36)", () => {
    expect(coriolisParameter(45)).toBeCloseTo(1.0313e-4, 8);
  });

  it("is zero at the equator, largest at the poles, negative in the south (common practice)", () => {
    expect(Math.abs(coriolisParameter(0))).toBeLessThan(1e-20);
    expect(coriolisParameter(90)).toBeCloseTo(2 * EARTH_ROTATION_RATE, 15);
    expect(coriolisParameter(-30)).toBeCloseTo(-EARTH_ROTATION_RATE, 15);
  });

  it("gives a = 2Ω(v sin φ − w cos φ, −u sin φ, u cos φ) (common practice)", () => {
    const o = EARTH_ROTATION_RATE;
    // Eastward motion at 30° N: deflected south (to the right) and lifted (Eötvös).
    const east = coriolisAcceleration({ east: 10, north: 0, up: 0 }, 30);
    expect(east.east).toBeCloseTo(0, 18);
    expect(east.north).toBeCloseTo(-2 * o * 10 * 0.5, 15);
    expect(east.up).toBeCloseTo(2 * o * 10 * Math.cos(Math.PI / 6), 15);
    // Northward motion at 30° N: deflected east (to the right).
    const north = coriolisAcceleration({ east: 0, north: 10, up: 0 }, 30);
    expect(north.east).toBeCloseTo(2 * o * 10 * 0.5, 15);
    expect(north.north).toBeCloseTo(0, 18);
    // Rising motion: deflected west.
    const up = coriolisAcceleration({ east: 0, north: 0, up: 1 }, 30);
    expect(up.east).toBeCloseTo(-2 * o * Math.cos(Math.PI / 6), 15);
    // Southern hemisphere: eastward motion deflected north (to the left).
    expect(coriolisAcceleration({ east: 10, north: 0, up: 0 }, -30).north).toBeGreaterThan(0);
  });
});

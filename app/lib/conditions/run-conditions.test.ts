import { describe, expect, it } from "vitest";
import { rpmToRadPerS } from "../analysis/units";
import {
  cautions,
  ekmanDepth,
  ekmanNumber,
  freeSurface,
  inertialPeriod,
  readyAt,
  rossbyNumber,
  spinUpRemaining,
  spinUpTime,
  surfaceHeight,
  waterDensity,
  waterDynamicViscosity,
  waterKinematicViscosity,
} from "./run-conditions";

// Fresh water at 0.101325 MPa: IAPWS-95 density with the IAPWS 2008 viscosity release (R12-08),
// as tabulated in ITTC Recommended Procedure 7.5-02-01-03 (2011).
const iapws = [
  { t: 10, rho: 999.7025, mu: 1.3059e-3, nu: 1.3063e-6 },
  { t: 15, rho: 999.1026, mu: 1.13757e-3, nu: 1.1386e-6 },
  { t: 20, rho: 998.2072, mu: 1.0016e-3, nu: 1.0034e-6 },
  { t: 25, rho: 997.0476, mu: 0.89002e-3, nu: 0.8927e-6 },
  { t: 30, rho: 995.6495, mu: 0.79722e-3, nu: 0.8007e-6 },
];
const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe("water properties", () => {
  for (const row of iapws) {
    it(`μ (Korson, Drost-Hansen & Millero 1969 eq. 5) and ν = μ/ρ (Tanaka et al. 2001 density) within 0.1% of IAPWS 2008 / ITTC 7.5-02-01-03 at ${row.t} °C`, () => {
      expect(rel(waterDynamicViscosity(row.t), row.mu)).toBeLessThan(1e-3);
      expect(rel(waterKinematicViscosity(row.t), row.nu)).toBeLessThan(1e-3);
    });
  }

  it("Tanaka et al. 2001 (Metrologia 38, 301) density within 2 ppm of the IAPWS-95 column at 10–30 °C", () => {
    for (const row of iapws) expect(rel(waterDensity(row.t), row.rho)).toBeLessThan(2e-6);
  });

  it("gives no number outside the correlations' 0–40 °C range", () => {
    expect(Number.isNaN(waterKinematicViscosity(-5))).toBe(true);
    expect(Number.isNaN(waterKinematicViscosity(60))).toBe(true);
    expect(Number.isNaN(waterKinematicViscosity(Number.NaN))).toBe(true);
  });
});

describe("Ekman layer and spin-up (Greenspan & Howard 1963, J. Fluid Mech. 17, 385: τ = H/√(νΩ); worked example recomputed)", () => {
  const nu = 1.0034e-6;

  it("Ω = 1 rad/s, H = 0.10 m, ν = 1.0034e-6 m²/s: δ = 1.00 mm, τ = 99.8 s, E = 1.0e-4", () => {
    expect(ekmanDepth(nu, 1) * 1000).toBeCloseTo(1.0, 2);
    expect(spinUpTime(0.1, nu, 1)).toBeCloseTo(99.8, 1);
    expect(ekmanNumber(nu, 1, 0.1)).toBeCloseTo(1.0e-4, 5);
  });

  it("halves the spin-up time under a lid and ignores the sense of rotation", () => {
    expect(spinUpTime(0.1, nu, -1, { lid: true })).toBeCloseTo(spinUpTime(0.1, nu, 1) / 2, 10);
    expect(ekmanDepth(nu, -1)).toBe(ekmanDepth(nu, 1));
  });

  it("leaves about 5% after 3τ and 0.7% after 5τ (Greenspan & Howard 1963 exponential spin-up)", () => {
    expect(spinUpRemaining(3)).toBeCloseTo(0.05, 2);
    expect(spinUpRemaining(5)).toBeCloseTo(0.0067, 4);
  });

  it("is ready n spin-up times after the table reached its rate", () => {
    const reached = new Date("2025-03-04T10:00:00Z");
    expect(readyAt(reached, 99.8, 5)!.toISOString()).toBe("2025-03-04T10:08:19.000Z");
    expect(readyAt(new Date("not a date"), 99.8, 5)).toBeNull();
    expect(readyAt(reached, Number.NaN, 5)).toBeNull();
    expect(readyAt(reached, 99.8, -1)).toBeNull();
  });
});

describe("free surface in solid-body rotation", () => {
  it("Ω = 1 rad/s, R = 0.30 m: centre-to-rim rise Ω²R²/(2g) = 4.589 mm (paraboloid of solid-body rotation, common practice, recomputed; gₙ from CGPM 1901)", () => {
    const s = freeSurface(1, 0.3, 0.1);
    expect(s.centreToRimRise * 1000).toBeCloseTo(4.589, 3);
    expect(s.centreDrop).toBeCloseTo(s.centreToRimRise / 2, 15);
    expect(s.rimRise).toBeCloseTo(s.centreToRimRise / 2, 15);
    expect(s.centreDepth).toBeCloseTo(0.1 - s.centreDrop, 15);
    expect(s.centreRunsDry).toBe(false);
    expect(surfaceHeight(0, 1, 0.3, 0.1)).toBeCloseTo(s.centreDepth, 15);
    expect(surfaceHeight(0.3, 1, 0.3, 0.1)).toBeCloseTo(s.rimDepth, 15);
    // Volume is kept: the surface crosses the rest depth at r = R/√2.
    expect(surfaceHeight(0.3 / Math.SQRT2, 1, 0.3, 0.1)).toBeCloseTo(0.1, 15);
  });

  it("runs the centre dry when Ω²R²/(4g) ≥ H₀", () => {
    // R = 0.5 m, H₀ = 2 cm: dry from Ω = √(4gH₀)/R = 1.7715 rad/s.
    expect(freeSurface(1.77, 0.5, 0.02).centreRunsDry).toBe(false);
    expect(freeSurface(1.775, 0.5, 0.02).centreRunsDry).toBe(true);
  });
});

describe("inertial period and Rossby number", () => {
  it("inertial period is π/|Ω|, half a table revolution (common practice)", () => {
    expect(inertialPeriod(rpmToRadPerS(10))).toBeCloseTo(3, 12);
    expect(inertialPeriod(-1)).toBeCloseTo(Math.PI, 15);
    expect(Number.isNaN(inertialPeriod(0))).toBe(true);
  });

  it("Ro = U/(|f|L) (common practice)", () => {
    expect(rossbyNumber(0.01, -2, 0.1)).toBeCloseTo(0.05, 15);
    expect(Number.isNaN(rossbyNumber(0.01, 0, 0.1))).toBe(true);
  });
});

describe("cautions", () => {
  const deference = /lab's own safety rules and the equipment maker's instructions come first/;

  it("warns near and above the table's maximum rate, deferring to the lab's rules", () => {
    expect(cautions({ omega: rpmToRadPerS(26), maxRateRpm: 30 })).toHaveLength(0);
    const near = cautions({ omega: rpmToRadPerS(-27.5), maxRateRpm: 30 });
    expect(near.map((c) => c.kind)).toEqual(["near-maximum-rate"]);
    expect(near[0]!.message).toMatch(/92% of this table's maximum/);
    expect(near[0]!.message).toMatch(deference);
    const above = cautions({ omega: rpmToRadPerS(33), maxRateRpm: 30 });
    expect(above.map((c) => c.kind)).toEqual(["above-maximum-rate"]);
  });

  it("warns when the centre would run dry or the layer there gets thin", () => {
    const dry = cautions({ omega: 2, tankRadius: 0.5, restDepth: 0.02 });
    expect(dry.map((c) => c.kind)).toEqual(["centre-runs-dry"]);
    expect(dry[0]!.message).toMatch(/runs dry/);
    expect(dry[0]!.message).toMatch(deference);
    // Drop Ω²R²/(4g) = 0.01434 m of 0.025 m: 57%.
    const thin = cautions({ omega: 1.5, tankRadius: 0.5, restDepth: 0.025 });
    expect(thin.map((c) => c.kind)).toEqual(["large-surface-drop"]);
    expect(thin[0]!.message).toMatch(/57% of the 25 mm rest depth/);
    expect(cautions({ omega: 1, tankRadius: 0.3, restDepth: 0.1 })).toHaveLength(0);
  });

  it("warns when the water would climb over the wall", () => {
    // Rim depth 0.1 + Ω²R²/(4g) = 0.1367 m against a 0.13 m wall.
    const spill = cautions({ omega: 3, tankRadius: 0.4, restDepth: 0.1, wallHeight: 0.13 });
    expect(cautions({ omega: 3, tankRadius: 0.4, restDepth: 0.1, wallHeight: 0.14 })).toHaveLength(0);
    expect(spill.map((c) => c.kind)).toContain("overtops-wall");
    expect(spill.find((c) => c.kind === "overtops-wall")!.message).toMatch(/electrics/);
  });

  it("says nothing it cannot judge", () => {
    expect(cautions({ omega: Number.NaN, maxRateRpm: 30 })).toEqual([]);
    expect(cautions({ omega: 1, maxRateRpm: null, tankRadius: null, restDepth: null })).toEqual([]);
  });
});

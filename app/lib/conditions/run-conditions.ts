/**
 * Run-condition calculators shown live on the run form and the run page: water properties,
 * Ekman layer and spin-up, the free surface in solid-body rotation, inertial period, Rossby
 * number, and the cautions a technician should see before running. SI units throughout; rates
 * are signed rad/s but only their size matters here. Inputs that make no physical sense give NaN
 * (shown as a dash), never an exception, because these run on every keystroke.
 */
import { radPerSToRpm, STANDARD_GRAVITY } from "../analysis/units";
import { formatNumber } from "../number-format";

/** Temperatures (°C) over which both water correlations below are published as valid. */
export const WATER_TEMPERATURE_RANGE = { min: 0, max: 40 } as const;

const inRange = (t: number) => Number.isFinite(t) && t >= WATER_TEMPERATURE_RANGE.min && t <= WATER_TEMPERATURE_RANGE.max;
const positive = (v: number) => Number.isFinite(v) && v > 0;

/**
 * Dynamic viscosity of fresh water, Pa·s: Korson, Drost-Hansen & Millero 1969 (J. Phys. Chem.
 * 73, 34), eq. 5: log₁₀(μ/μ₂₀) = [1.1709(20 − t) − 0.001827(t − 20)²]/(t + 89.93),
 * μ₂₀ = 1.0016 mPa·s. Within 0.1% of the IAPWS 2008 formulation over 0–40 °C.
 */
export function waterDynamicViscosity(temperatureC: number): number {
  if (!inRange(temperatureC)) return Number.NaN;
  const t = temperatureC;
  const log10Ratio = (1.1709 * (20 - t) - 0.001827 * (t - 20) ** 2) / (t + 89.93);
  return 1.0016e-3 * 10 ** log10Ratio;
}

/**
 * Density of air-free fresh water at 101 325 Pa, kg/m³: Tanaka, Girard, Davis, Peuto & Bignell
 * 2001 (Metrologia 38, 301), ρ = a₅[1 − (t + a₁)²(t + a₂)/(a₃(t + a₄))]; within about 1 ppm of
 * IAPWS-95 over 0–40 °C.
 */
export function waterDensity(temperatureC: number): number {
  if (!inRange(temperatureC)) return Number.NaN;
  const t = temperatureC;
  const a1 = -3.983035;
  const a2 = 301.797;
  const a3 = 522528.9;
  const a4 = 69.34881;
  const a5 = 999.97495;
  return a5 * (1 - ((t + a1) ** 2 * (t + a2)) / (a3 * (t + a4)));
}

/** Kinematic viscosity ν = μ/ρ of fresh water, m²/s. */
export function waterKinematicViscosity(temperatureC: number): number {
  return waterDynamicViscosity(temperatureC) / waterDensity(temperatureC);
}

/** Ekman layer depth δ = √(ν/|Ω|), m. */
export function ekmanDepth(nu: number, omega: number): number {
  if (!positive(nu) || !Number.isFinite(omega)) return Number.NaN;
  return Math.sqrt(nu / Math.abs(omega));
}

/** Ekman number E = ν/(|Ω|H²). */
export function ekmanNumber(nu: number, omega: number, depth: number): number {
  if (!positive(nu) || !Number.isFinite(omega) || !positive(depth)) return Number.NaN;
  return nu / (Math.abs(omega) * depth * depth);
}

/**
 * Spin-up e-folding time, s: τ = H/√(ν|Ω|) for a free surface over one bottom Ekman layer; under
 * a lid each layer serves half the depth, τ = (H/2)/√(ν|Ω|). The E^(−1/2)/Ω scaling is Greenspan
 * & Howard 1963 (J. Fluid Mech. 17, 385).
 */
export function spinUpTime(depth: number, nu: number, omega: number, options: { lid?: boolean } = {}): number {
  if (!positive(depth) || !positive(nu) || !Number.isFinite(omega)) return Number.NaN;
  const h = options.lid ? depth / 2 : depth;
  return h / Math.sqrt(nu * Math.abs(omega));
}

/** Fraction of a rate change still to settle after n spin-up times, e^(−n). */
export function spinUpRemaining(nSpinUps: number): number {
  return Number.isFinite(nSpinUps) && nSpinUps >= 0 ? Math.exp(-nSpinUps) : Number.NaN;
}

/**
 * When the water is ready to film: the moment the table reached its rate plus n spin-up times
 * (the number is the lab's rule, a setting). Null when any input is unusable.
 */
export function readyAt(reachedRateAt: Date, spinUpTimeS: number, nSpinUps: number): Date | null {
  if (!(reachedRateAt instanceof Date) || Number.isNaN(reachedRateAt.getTime())) return null;
  if (!Number.isFinite(spinUpTimeS) || spinUpTimeS < 0 || !Number.isFinite(nSpinUps) || nSpinUps < 0) return null;
  return new Date(reachedRateAt.getTime() + spinUpTimeS * nSpinUps * 1000);
}

export interface FreeSurface {
  /** m, fall of the surface at the centre below the rest depth, Ω²R²/(4g) */
  centreDrop: number;
  /** m, rise of the surface at the rim above the rest depth, Ω²R²/(4g) */
  rimRise: number;
  /** m, centre-to-rim rise Ω²R²/(2g) */
  centreToRimRise: number;
  /** m, water depth at the centre, H₀ − Ω²R²/(4g) (negative when it runs dry) */
  centreDepth: number;
  /** m, water depth at the rim */
  rimDepth: number;
  /** true when Ω²R²/(4g) ≥ H₀ */
  centreRunsDry: boolean;
}

/**
 * Free surface of water in solid-body rotation in a cylinder of radius R with rest depth H₀,
 * volume kept: h(r) = H₀ − Ω²(R² − 2r²)/(4g).
 */
export function freeSurface(omega: number, radius: number, restDepth: number, g: number = STANDARD_GRAVITY): FreeSurface {
  const ok = Number.isFinite(omega) && positive(radius) && positive(restDepth) && positive(g);
  const quarter = ok ? (omega * omega * radius * radius) / (4 * g) : Number.NaN;
  return {
    centreDrop: quarter,
    rimRise: quarter,
    centreToRimRise: 2 * quarter,
    centreDepth: restDepth - quarter,
    rimDepth: restDepth + quarter,
    centreRunsDry: ok && quarter >= restDepth,
  };
}

/** Surface height above the tank floor at distance r from the axis, m. */
export function surfaceHeight(r: number, omega: number, radius: number, restDepth: number, g: number = STANDARD_GRAVITY): number {
  const ok = Number.isFinite(omega) && positive(radius) && positive(restDepth) && positive(g);
  if (!ok || !Number.isFinite(r) || r < 0 || r > radius) return Number.NaN;
  return restDepth - (omega * omega * (radius * radius - 2 * r * r)) / (4 * g);
}

/** Inertial period π/|Ω| (= 2π/|f| with f = 2Ω: half a table revolution), s. */
export function inertialPeriod(omega: number): number {
  if (!Number.isFinite(omega) || omega === 0) return Number.NaN;
  return Math.PI / Math.abs(omega);
}

/** Rossby number Ro = U/(|f|L) of a motion with speed U (m/s) and length L (m). */
export function rossbyNumber(speed: number, f: number, length: number): number {
  if (!Number.isFinite(speed) || !Number.isFinite(f) || f === 0 || !positive(length)) return Number.NaN;
  return Math.abs(speed) / (Math.abs(f) * length);
}

export type CautionKind = "above-maximum-rate" | "near-maximum-rate" | "centre-runs-dry" | "large-surface-drop" | "overtops-wall";

export interface Caution {
  kind: CautionKind;
  message: string;
}

/** Fraction of a table's maximum rate from which the rate caution shows. */
export const NEAR_MAXIMUM_FRACTION = 0.9;
/** Fraction of the rest depth by which the centre may fall before the thin-layer caution shows. */
export const LARGE_DROP_FRACTION = 0.5;

const DEFER = "These limits are guides: the lab's own safety rules and the equipment maker's instructions come first.";

function mm(metres: number): string {
  return `${formatNumber(metres * 1000, 3)} mm`;
}

export interface CautionInput {
  /** rad/s, signed */
  omega: number;
  /** the table's maximum rate, rpm */
  maxRateRpm?: number | null;
  /** m */
  tankRadius?: number | null;
  /** m, water depth at rest */
  restDepth?: number | null;
  /** m, height of the tank wall above its floor */
  wallHeight?: number | null;
}

/**
 * Cautions for a planned run, each in words a technician reads, each deferring to the lab's
 * safety rules and the maker's instructions. Only the inputs given are judged.
 */
export function cautions(input: CautionInput): Caution[] {
  const out: Caution[] = [];
  const { omega } = input;
  if (!Number.isFinite(omega)) return out;
  const rpm = Math.abs(radPerSToRpm(omega));
  const max = input.maxRateRpm;
  if (max !== null && max !== undefined && positive(max)) {
    const rateText = `${formatNumber(rpm, 3)} rpm`;
    const maxText = `${formatNumber(max, 3)} rpm`;
    if (rpm > max) {
      out.push({
        kind: "above-maximum-rate",
        message: `The set rate, ${rateText}, is above this table's maximum of ${maxText}. Do not run it there. ${DEFER}`,
      });
    } else if (rpm >= NEAR_MAXIMUM_FRACTION * max) {
      out.push({
        kind: "near-maximum-rate",
        message: `The set rate, ${rateText}, is ${Math.round((100 * rpm) / max)}% of this table's maximum (${maxText}). Secure the table, ramp the rate up and down gently and keep hands clear of the rim while it turns. ${DEFER}`,
      });
    }
  }
  const radius = input.tankRadius;
  const depth = input.restDepth;
  if (radius !== null && radius !== undefined && depth !== null && depth !== undefined && positive(radius) && positive(depth)) {
    const s = freeSurface(omega, radius, depth);
    if (s.centreRunsDry) {
      out.push({
        kind: "centre-runs-dry",
        message: `At this rate the free surface would fall ${mm(s.centreDrop)} at the centre, as much as or more than the ${mm(depth)} rest depth: the centre of the tank runs dry. Lower the rate or add water. ${DEFER}`,
      });
    } else if (s.centreDrop >= LARGE_DROP_FRACTION * depth) {
      out.push({
        kind: "large-surface-drop",
        message: `At this rate the free surface falls ${mm(s.centreDrop)} at the centre, ${Math.round((100 * s.centreDrop) / depth)}% of the ${mm(depth)} rest depth: the water there is only ${mm(s.centreDepth)} deep. ${DEFER}`,
      });
    }
    const wall = input.wallHeight;
    if (wall !== null && wall !== undefined && positive(wall) && s.rimDepth > wall) {
      out.push({
        kind: "overtops-wall",
        message: `At this rate the water would climb to ${mm(s.rimDepth)} at the rim, above the ${mm(wall)} wall: it would spill. Mind spilled water near electrics. ${DEFER}`,
      });
    }
  }
  return out;
}

/**
 * The view setup's tilt marks as stored (JSON text in two columns, migration 0016) and read back:
 * the one way a saved setup becomes its correction, for the check, the run page, exports and plots.
 */
import type { Point } from "../geometry";
import { GeometryError } from "./geometry-error";
import type { KnownPointEntry } from "./known-points";
import { viewCorrection, type KnownPoint, type TiltMarks, type ViewCorrection } from "./view-correction";

const finite = (v: unknown): v is number => typeof v === "number" && Number.isFinite(v);

function readList(text: string | null | undefined): unknown[] | null {
  if (!text) return null;
  try {
    const value: unknown = JSON.parse(text);
    return Array.isArray(value) ? value : null;
  } catch {
    return null;
  }
}

export function parseRimPoints(text: string | null | undefined): Point[] | null {
  const list = readList(text);
  if (!list) return null;
  const points = list.filter((p): p is Point => typeof p === "object" && p !== null && finite((p as Point).x) && finite((p as Point).y));
  return points.length === list.length ? points.map((p) => ({ x: p.x, y: p.y })) : null;
}

export function parseKnownPoints(text: string | null | undefined): KnownPoint[] | null {
  const list = readList(text);
  if (!list) return null;
  const ok = (p: unknown): p is KnownPoint =>
    typeof p === "object" && p !== null && [(p as KnownPoint).x, (p as KnownPoint).y, (p as KnownPoint).tableXCm, (p as KnownPoint).tableYCm].every(finite);
  const points = list.filter(ok);
  return points.length === list.length ? points.map((p) => ({ x: p.x, y: p.y, tableXCm: p.tableXCm, tableYCm: p.tableYCm })) : null;
}

/**
 * Known points as the form sends them: each with its pixels, its table position a number or null
 * while not typed (so the check can say which point lacks one); null when the text is not such a list.
 */
export function parseKnownPointEntries(text: string | null | undefined): KnownPointEntry[] | null {
  const list = readList(text);
  if (!list) return null;
  const orNull = (v: unknown) => v === null || finite(v);
  const ok = (p: unknown): p is KnownPointEntry =>
    typeof p === "object" &&
    p !== null &&
    finite((p as KnownPointEntry).x) &&
    finite((p as KnownPointEntry).y) &&
    orNull((p as KnownPointEntry).tableXCm) &&
    orNull((p as KnownPointEntry).tableYCm);
  const points = list.filter(ok);
  return points.length === list.length ? points.map((p) => ({ x: p.x, y: p.y, tableXCm: p.tableXCm, tableYCm: p.tableYCm })) : null;
}

/** The marks a setup carries, rim points first; null when it has none. */
export function tiltMarksOf(setup: { rimPoints?: string | null; knownPoints?: string | null }): TiltMarks | null {
  const rim = parseRimPoints(setup.rimPoints);
  if (rim && rim.length) return { kind: "rim", points: rim };
  const known = parseKnownPoints(setup.knownPoints);
  if (known && known.length) return { kind: "known", points: known };
  return null;
}

/**
 * The correction of a saved setup, or null when it has no tilt marks. Marks are checked when the
 * setup is saved; should stored marks no longer give one, the error says so rather than correcting wrongly.
 */
export function correctionOfSetup(setup: { centreXPx: number; centreYPx: number; mirrored: boolean; rimPoints?: string | null; knownPoints?: string | null }): {
  correction: ViewCorrection | null;
  error: string | null;
} {
  const marks = tiltMarksOf(setup);
  if (!marks) return { correction: null, error: null };
  try {
    return { correction: viewCorrection(marks, { x: setup.centreXPx, y: setup.centreYPx }, setup.mirrored), error: null };
  } catch (error) {
    if (error instanceof GeometryError) return { correction: null, error: error.message };
    throw error;
  }
}

/**
 * Known points: places in the frame whose position on the table the technician measured (cm from
 * the rotation axis). Four or more fix the homography between the frame and the table's plane;
 * this module checks them in words, builds the point pairs the correction is fitted to, and says
 * where the fitted map puts each point and the table's grid back in the frame, for the setup's
 * overlay. The map holds for the plane the points lie in (Decision 69: the plane the tracer moves in).
 */
import type { Point } from "../geometry";
import { GeometryError } from "./geometry-error";
import { homographyFromPairs, project, type PointPair } from "./homography";
import { invert, type Mat3 } from "./matrix";

export interface KnownPoint {
  /** image px */
  x: number;
  y: number;
  /** where it is on the table, cm from the rotation axis (x right, y up in an unmirrored view) */
  tableXCm: number;
  tableYCm: number;
}

/** A known point as the editor holds it: clicked, its table position perhaps not typed yet. */
export interface KnownPointEntry {
  x: number;
  y: number;
  tableXCm: number | null;
  tableYCm: number | null;
}

export const minKnownPoints = 4;
/** Two clicks closer than this (image px) are one spot. */
export const sameSpotPx = 2;
/** Two table positions closer than this (cm) are one place. */
export const samePlaceCm = 0.1;

const finite = (n: unknown): n is number => typeof n === "number" && Number.isFinite(n);

/** True when every point lies within `tolerance` (as a share of their spread) of one straight line. */
function inOneLine(points: readonly Point[], tolerance = 1e-3): boolean {
  const n = points.length;
  const mx = points.reduce((s, p) => s + p.x, 0) / n;
  const my = points.reduce((s, p) => s + p.y, 0) / n;
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (const p of points) {
    sxx += (p.x - mx) ** 2;
    syy += (p.y - my) ** 2;
    sxy += (p.x - mx) * (p.y - my);
  }
  const mean = (sxx + syy) / 2;
  const spread = Math.hypot((sxx - syy) / 2, sxy);
  const large = mean + spread;
  const small = mean - spread;
  return !(large > 0) || Math.sqrt(Math.max(0, small) / large) < tolerance;
}

function firstPairWithin(points: readonly Point[], limit: number): [number, number] | null {
  for (let i = 0; i < points.length; i++)
    for (let j = i + 1; j < points.length; j++) if (Math.hypot(points[i]!.x - points[j]!.x, points[i]!.y - points[j]!.y) < limit) return [i, j];
  return null;
}

/**
 * What stops these known points from giving a correction, in words naming the point (numbered
 * from 1), or null when nothing does (the fit itself may still refuse three of four in a line).
 */
export function knownPointsProblem(entries: readonly KnownPointEntry[]): string | null {
  const missing = entries.findIndex((e) => !finite(e.tableXCm) || !finite(e.tableYCm));
  if (missing >= 0) return `Known point ${missing + 1} needs its place on the table: x and y in cm, as numbers.`;
  if (entries.some((e) => !finite(e.x) || !finite(e.y))) return "Every known point needs its column and row in the frame, in pixels.";
  if (entries.length < minKnownPoints) {
    return `A correction from known points needs at least ${minKnownPoints} of them; ${entries.length} ${entries.length === 1 ? "is" : "are"} placed.`;
  }
  const spot = firstPairWithin(entries, sameSpotPx);
  if (spot) return `Known points ${spot[0] + 1} and ${spot[1] + 1} are on the same spot of the frame; remove one and click another mark.`;
  const table = entries.map((e) => ({ x: e.tableXCm!, y: e.tableYCm! }));
  const place = firstPairWithin(table, samePlaceCm);
  if (place) return `Known points ${place[0] + 1} and ${place[1] + 1} are given the same place on the table; check the positions you typed.`;
  if (inOneLine(entries)) return "The known points lie in one line in the frame; pick marks spread around the tank.";
  if (inOneLine(table)) return "The table positions typed lie in one line; pick marks spread around the tank.";
  return null;
}

/** The entries as known points, once every table position is a number. */
export function completeKnownPoints(entries: readonly KnownPointEntry[]): KnownPoint[] | null {
  if (!entries.every((e) => finite(e.tableXCm) && finite(e.tableYCm))) return null;
  return entries.map((e) => ({ x: e.x, y: e.y, tableXCm: e.tableXCm!, tableYCm: e.tableYCm! }));
}

/** Image px → table positions in the orientation of an unmirrored image (right +x, down +y), cm. */
export function knownPairs(points: readonly KnownPoint[], mirrored: boolean): PointPair[] {
  const flip = mirrored ? -1 : 1;
  return points.map((p) => ({ from: { x: p.x, y: p.y }, to: { x: flip * p.tableXCm, y: -p.tableYCm } }));
}

/** The homography from the frame to the table (cm, image orientation), after the checks in words. */
export function knownPointsHomography(points: readonly KnownPoint[], mirrored: boolean): Mat3 {
  const problem = knownPointsProblem(points);
  if (problem) throw new GeometryError(problem);
  return homographyFromPairs(knownPairs(points, mirrored));
}

export interface KnownPointsFit {
  /** for each point: where the fitted map puts its table position in the frame, and how far that is from the click (px) */
  points: { clicked: Point; fitted: Point; offPx: number }[];
  /** RMS of offPx */
  residualPx: number;
  /** the table's grid (lines every stepCm within radiusCm, the farthest point's distance, and that circle) as the camera sees it, image px */
  grid: { lines: [Point, Point][]; circle: Point[]; stepCm: number; radiusCm: number };
}

/** A round grid step giving about six lines across the points' reach. */
function gridStep(radiusCm: number): number {
  const raw = radiusCm / 3;
  const power = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * power).find((s) => s >= raw);
  return step ?? 10 * power;
}

/**
 * What the known points' map makes of them: each table position sent back into the frame against
 * its click, and the table's grid drawn through the same map (straight lines stay straight, the
 * circle comes out an ellipse when the camera leans). Throws GeometryError as knownPointsHomography does.
 */
export function knownPointsFit(points: readonly KnownPoint[], mirrored: boolean): KnownPointsFit {
  const toTable = knownPointsHomography(points, mirrored);
  const toImage = invert(toTable);
  if (!toImage) throw new GeometryError("The known points do not fix a correction: some lie in a line or repeat; spread them around the tank.");
  const pairs = knownPairs(points, mirrored);
  const fitted = pairs.map((pair) => {
    const back = project(toImage, pair.to);
    if (!back) throw new GeometryError("The known points send part of the table out of sight; check the positions you typed.");
    return { clicked: pair.from, fitted: back, offPx: Math.hypot(back.x - pair.from.x, back.y - pair.from.y) };
  });
  const residualPx = Math.sqrt(fitted.reduce((s, p) => s + p.offPx ** 2, 0) / fitted.length);
  const reach = Math.max(...pairs.map((p) => Math.hypot(p.to.x, p.to.y)));
  const stepCm = gridStep(reach);
  // Out to the farthest point (to the whole cm), so the grid covers what the marks vouch for and no more.
  const radiusCm = Math.ceil(reach - 1e-9);
  const lines: [Point, Point][] = [];
  const send = (p: Point) => project(toImage, p);
  for (let k = -Math.floor(radiusCm / stepCm); k <= Math.floor(radiusCm / stepCm); k++) {
    const c = k * stepCm;
    const half = Math.sqrt(Math.max(0, radiusCm ** 2 - c ** 2));
    if (half <= 0) continue;
    for (const [a, b] of [
      [
        { x: c, y: -half },
        { x: c, y: half },
      ],
      [
        { x: -half, y: c },
        { x: half, y: c },
      ],
    ] as [Point, Point][]) {
      const pa = send(a);
      const pb = send(b);
      if (pa && pb) lines.push([pa, pb]);
    }
  }
  const circle = Array.from({ length: 72 }, (_, i) => send({ x: radiusCm * Math.cos((i * Math.PI) / 36), y: radiusCm * Math.sin((i * Math.PI) / 36) })).filter(
    (p): p is Point => p !== null,
  );
  return { points: fitted, residualPx, grid: { lines, circle, stepCm, radiusCm } };
}

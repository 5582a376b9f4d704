import type { Point } from "./geometry";
import type { KnownPointEntry } from "./projective/known-points";

/**
 * The marks of a view setup as one list: each knows where it sits and how to move it, so the
 * editor selects, nudges and zooms to any of them the same way, and a new kind of mark is one more
 * entry here.
 */
export interface SetupValues {
  centre: Point | null;
  edge: { cx: number; cy: number; r: number } | null;
  scalePoints: [Point, Point] | null;
  scaleLengthCm: number | null;
  mirrored: boolean;
  /** A mark on the turntable, for reading the table's rate from the frames (lab-fixed camera). */
  rateMark: Point | null;
  /** A camera not quite overhead (Decision 69): points on the tank's edge at the water's surface (five or more make an ellipse). */
  rimPoints: Point[];
  /** …or points whose place on the table is known (cm from the axis; null while not typed yet). */
  knownPoints: KnownPointEntry[];
}

export interface SetupMark {
  id: string;
  label: string;
  /** Where the mark sits in the frame's pixels, or null while it is not placed. */
  at(v: SetupValues): Point | null;
  /** The values with this mark moved to p (only called for a placed mark). */
  moveTo(v: SetupValues, p: Point): SetupValues;
}

export const setupMarks: SetupMark[] = [
  { id: "centre", label: "Rotation centre", at: (v) => v.centre, moveTo: (v, p) => ({ ...v, centre: p }) },
  {
    id: "edge",
    label: "Tank edge (its centre)",
    at: (v) => (v.edge ? { x: v.edge.cx, y: v.edge.cy } : null),
    moveTo: (v, p) => (v.edge ? { ...v, edge: { ...v.edge, cx: p.x, cy: p.y } } : v),
  },
  ...([0, 1] as const).map((end): SetupMark => ({
    id: `scale-${end + 1}`,
    label: `Scale, ${end ? "second" : "first"} end`,
    at: (v) => v.scalePoints?.[end] ?? null,
    moveTo: (v, p) => {
      if (!v.scalePoints) return v;
      const pts: [Point, Point] = [v.scalePoints[0], v.scalePoints[1]];
      pts[end] = p;
      return { ...v, scalePoints: pts };
    },
  })),
  { id: "rate-mark", label: "Mark on the table", at: (v) => v.rateMark, moveTo: (v, p) => ({ ...v, rateMark: p }) },
];

/** The i-th rim point as a mark: selected, nudged and listed like the others. */
export function rimPointMark(i: number): SetupMark {
  return {
    id: `rim-${i + 1}`,
    label: `Rim point ${i + 1}`,
    at: (v) => v.rimPoints[i] ?? null,
    moveTo: (v, p) => (i < v.rimPoints.length ? { ...v, rimPoints: v.rimPoints.map((q, j) => (j === i ? p : q)) } : v),
  };
}

/** The i-th known point as a mark (its image position; its place on the table is typed). */
export function knownPointMark(i: number): SetupMark {
  return {
    id: `known-${i + 1}`,
    label: `Known point ${i + 1}`,
    at: (v) => {
      const k = v.knownPoints[i];
      return k ? { x: k.x, y: k.y } : null;
    },
    moveTo: (v, p) => (i < v.knownPoints.length ? { ...v, knownPoints: v.knownPoints.map((q, j) => (j === i ? { ...q, x: p.x, y: p.y } : q)) } : v),
  };
}

/** Every mark of these values: the fixed ones, then one per rim point and per known point. */
export function marksOf(v: SetupValues): SetupMark[] {
  return [...setupMarks, ...v.rimPoints.map((_, i) => rimPointMark(i)), ...v.knownPoints.map((_, i) => knownPointMark(i))];
}

export const nudgeKeys: Record<string, Point> = { ArrowLeft: { x: -1, y: 0 }, ArrowRight: { x: 1, y: 0 }, ArrowUp: { x: 0, y: -1 }, ArrowDown: { x: 0, y: 1 } };

/**
 * The values with `mark` moved by one arrow key: 1 image pixel, 10 with Shift, kept inside the
 * frame. Unchanged for another key or a mark not yet placed.
 */
export function nudge(v: SetupValues, mark: SetupMark, key: string, shift: boolean, frame: { width: number; height: number }): SetupValues {
  const step = nudgeKeys[key];
  const p = mark.at(v);
  if (!step || !p) return v;
  const by = shift ? 10 : 1;
  const clamp = (n: number, max: number) => Math.min(max, Math.max(0, n));
  return mark.moveTo(v, { x: clamp(p.x + step.x * by, frame.width), y: clamp(p.y + step.y * by, frame.height) });
}

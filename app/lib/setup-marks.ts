import type { Point } from "./geometry";

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

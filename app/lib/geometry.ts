export interface Point {
  x: number;
  y: number;
}

/** The circle through three points (the perpendicular bisectors meet at its centre); null when they are in a line. */
export function circleThroughThreePoints(a: Point, b: Point, c: Point): { cx: number; cy: number; r: number } | null {
  const d = 2 * (a.x * (b.y - c.y) + b.x * (c.y - a.y) + c.x * (a.y - b.y));
  const scale = Math.max(1, Math.abs(a.x) + Math.abs(a.y) + Math.abs(b.x) + Math.abs(b.y) + Math.abs(c.x) + Math.abs(c.y));
  if (Math.abs(d) < 1e-9 * scale * scale) return null;
  const a2 = a.x * a.x + a.y * a.y;
  const b2 = b.x * b.x + b.y * b.y;
  const c2 = c.x * c.x + c.y * c.y;
  const cx = (a2 * (b.y - c.y) + b2 * (c.y - a.y) + c2 * (a.y - b.y)) / d;
  const cy = (a2 * (c.x - b.x) + b2 * (a.x - c.x) + c2 * (b.x - a.x)) / d;
  return { cx, cy, r: Math.hypot(a.x - cx, a.y - cy) };
}

export function distance(a: Point, b: Point) {
  return Math.hypot(a.x - b.x, a.y - b.y);
}

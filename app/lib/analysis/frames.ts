/**
 * From image pixels to the right-handed frame seen from above (x right, y up, z up the axis,
 * origin on the rotation axis), and from a lab-fixed view to the rotating frame. A camera not
 * quite overhead is undone here and only here: the view's correction (a homography from the view
 * setup's rim or known points, app/lib/projective/view-correction.ts) takes image pixels to an
 * overhead view's before the centre, scale and mirror apply, so the fit, the check, exports and
 * plots all see corrected positions.
 */
import { project } from "../projective/homography";
import { invert, type Mat3 } from "../projective/matrix";

export interface ImagePoint {
  /** column, px */
  x: number;
  /** row, px (pointing down) */
  y: number;
}

export interface TimedPoint {
  /** s */
  t: number;
  x: number;
  y: number;
}

/** The part of a view setup the kinematics needs. */
export interface ViewGeometry {
  /** Rotation centre in image pixels. */
  centre: ImagePoint;
  /** Pixels per metre; null when no scale is known (then lengths stay in pixel units). */
  pxPerM: number | null;
  /** True when the image shows the table from below or mirrored: it flips the sense of rotation. */
  mirrored: boolean;
  /** Image px → the px of an overhead view (row-major 3 × 3), for a camera not quite overhead; absent or null: none. */
  correction?: Mat3 | null;
}

/** Length unit of the frame coordinates: metres with a scale, pixel units without one. */
export function lengthUnit(view: ViewGeometry): "m" | "px" {
  return view.pxPerM === null ? "px" : "m";
}

/** f does not depend on the length scale, so without one we work in pixel units (s = 1). */
function pixelsPerUnit(view: ViewGeometry): number {
  return view.pxPerM ?? 1;
}

/** A point through the correction; NaN where it has none (a point on the vanishing line), which the check leaves out like any non-finite point. */
function corrected(H: Mat3, p: ImagePoint): ImagePoint {
  return project(H, p) ?? { x: NaN, y: NaN };
}

/** x = ±(col − cx)/s, y = −(row − cy)/s after the correction (the centre corrected too); the mirror flips x. */
export function imageToTable(p: ImagePoint, view: ViewGeometry): { x: number; y: number } {
  const s = pixelsPerUnit(view);
  const q = view.correction ? corrected(view.correction, p) : p;
  const c = view.correction ? corrected(view.correction, view.centre) : view.centre;
  const x = (q.x - c.x) / s;
  return { x: view.mirrored ? -x : x, y: -(q.y - c.y) / s };
}

export function tableToImage(p: { x: number; y: number }, view: ViewGeometry): ImagePoint {
  const s = pixelsPerUnit(view);
  const x = view.mirrored ? -p.x : p.x;
  if (!view.correction) return { x: view.centre.x + x * s, y: view.centre.y - p.y * s };
  const c = corrected(view.correction, view.centre);
  const inverse = invert(view.correction);
  const q = { x: c.x + x * s, y: c.y - p.y * s };
  return inverse ? corrected(inverse, q) : { x: NaN, y: NaN };
}

function rotate(x: number, y: number, angle: number): { x: number; y: number } {
  const c = Math.cos(angle);
  const s = Math.sin(angle);
  return { x: c * x - s * y, y: s * x + c * y };
}

/**
 * Lab-fixed positions (frame seen from above, origin on the axis) to the rotating frame:
 * each position is turned by −Ω(t − t₀) using its own time, so uneven frame times stay right.
 */
export function deRotate(points: readonly TimedPoint[], omega: number, t0: number): TimedPoint[] {
  return points.map((p) => ({ t: p.t, ...rotate(p.x, p.y, -omega * (p.t - t0)) }));
}

/** Rotating-frame positions back to the lab frame: turn each by +Ω(t − t₀). */
export function reRotate(points: readonly TimedPoint[], omega: number, t0: number): TimedPoint[] {
  return points.map((p) => ({ t: p.t, ...rotate(p.x, p.y, omega * (p.t - t0)) }));
}

export type CameraMode = "rotating" | "lab";

/**
 * Image-pixel track to rotating-frame positions. A co-rotating camera already sees the rotating
 * frame; a lab-fixed one is de-rotated about the centre.
 */
export function trackToRotatingFrame(points: readonly TimedPoint[], view: ViewGeometry, cameraMode: CameraMode, omega: number, t0: number): TimedPoint[] {
  const table = points.map((p) => ({ t: p.t, ...imageToTable(p, view) }));
  return cameraMode === "lab" ? deRotate(table, omega, t0) : table;
}

/**
 * A rotating-frame position to image pixels as seen at time t (default t₀), for drawing the
 * fitted circle over a frame. With a co-rotating camera the time does not matter.
 */
export function rotatingFrameToImage(
  p: { x: number; y: number },
  view: ViewGeometry,
  cameraMode: CameraMode,
  omega: number,
  t0: number,
  t: number = t0,
): ImagePoint {
  const lab = cameraMode === "lab" ? rotate(p.x, p.y, omega * (t - t0)) : p;
  return tableToImage(lab, view);
}

/**
 * A camera not quite overhead, undone: from the view setup's rim points (an ellipse) or known
 * points (image positions with their places on the table), the homography that takes image
 * pixels to the pixels an overhead camera would have seen. It keeps the marked rotation centre where
 * it is, and near it neither turns nor changes areas (the Jacobian there is symmetric with
 * determinant 1), so the setup's centre, scale and mirror keep their meaning and
 * analysis/frames.ts applies it before everything else. The summary says how far the camera leans
 * and towards which side of the frame.
 */
import type { Point } from "../geometry";
import { rectifyCircle } from "./circle-rectification";
import { fitEllipse, type Ellipse } from "./ellipse-fit";
import { GeometryError } from "./geometry-error";
import { project } from "./homography";
import { knownPairs, knownPointsHomography, type KnownPoint } from "./known-points";
import { invert, mat3, multiply, type Mat3 } from "./matrix";

export type { KnownPoint };

export type TiltMarks = { kind: "rim"; points: Point[] } | { kind: "known"; points: KnownPoint[] };

/** How the rim's ellipse is made metric: affine (ellipse to circle) or with the pole–polar vanishing line from the marked centre. */
export type RimConstruction = "affine" | "pole-polar";

export interface CorrectionSummary {
  method: "rim ellipse" | "known points";
  /** degrees the camera's axis leans off the table's normal, read at the rotation centre */
  tiltDeg: number;
  /** the side of the frame the camera leans towards (the far side of the tank): degrees counter-clockwise from the frame's right, up positive */
  towardDeg: number;
  /** false when the marks fix only the axis of the lean, not its side (then towardDeg is one of two opposite sides) */
  sideKnown: boolean;
  /** the rim's ellipse (rim points only), image px and degrees */
  ellipse: { cx: number; cy: number; a: number; b: number; angleDeg: number } | null;
  /** RMS distance of the marks from what the correction makes of them, px */
  residualPx: number;
}

export interface ViewCorrection {
  /** image px → overhead px (row-major 3 × 3) */
  homography: Mat3;
  summary: CorrectionSummary;
}

/** Rim points further than this from their ellipse on average (px, or a share of its radius when that is more) are taken for a mistake. */
export const maxRimResidualPx = 1.5;
export const maxRimResidualShare = 0.01;

/** The largest lean the marks may imply before they are taken for a mistake. */
export const maxTiltDeg = 25;

/** d(H p)/dp at p, as [[∂x/∂px, ∂x/∂py], [∂y/∂px, ∂y/∂py]]. */
export function jacobianAt(H: Mat3, p: Point): [[number, number], [number, number]] {
  const w = H[2][0] * p.x + H[2][1] * p.y + H[2][2];
  const q = project(H, p);
  if (!q || !(Math.abs(w) > 0)) throw new GeometryError("The marks send the rotation centre to infinity; check them.");
  return [
    [(H[0][0] - q.x * H[2][0]) / w, (H[0][1] - q.x * H[2][1]) / w],
    [(H[1][0] - q.y * H[2][0]) / w, (H[1][1] - q.y * H[2][1]) / w],
  ];
}

/** G (image → any similar copy of the overhead view) made to fix `centre`, with a symmetric Jacobian of determinant 1 there. */
function normaliseAt(G: Mat3, centre: Point): Mat3 {
  const J = jacobianAt(G, centre);
  const det = J[0][0] * J[1][1] - J[0][1] * J[1][0];
  if (!(det > 0)) throw new GeometryError("The known points come out mirrored against the image; check the table positions (and the mirror setting).");
  const phi = Math.atan2(J[1][0] - J[0][1], J[0][0] + J[1][1]);
  const k = 1 / Math.sqrt(det);
  const g = project(G, centre)!;
  const c = Math.cos(-phi) * k;
  const s = Math.sin(-phi) * k;
  const S = mat3([
    [c, -s, centre.x - (c * g.x - s * g.y)],
    [s, c, centre.y - (s * g.x + c * g.y)],
    [0, 0, 1],
  ]);
  return multiply(S, G);
}

const degrees = (rad: number) => (rad * 180) / Math.PI;

/** The lean at the centre from the normalised correction F and the side from its vanishing line (or from `farSideHint`). */
function summarise(F: Mat3, centre: Point, farSideHint: Point | null): Pick<CorrectionSummary, "tiltDeg" | "towardDeg" | "sideKnown"> {
  const J = jacobianAt(F, centre);
  // Symmetric with determinant 1: eigenvalues λ and 1/λ; the image is squeezed along the eigenvector of the larger one.
  const p = J[0][0];
  const q = (J[0][1] + J[1][0]) / 2;
  const r = J[1][1];
  const mean = (p + r) / 2;
  const spread = Math.hypot((p - r) / 2, q);
  const large = mean + spread;
  const small = mean - spread;
  const ratio = Math.min(1, Math.max(0, small / large));
  const tiltDeg = degrees(Math.acos(ratio));
  let u: Point = spread < 1e-12 ? { x: 1, y: 0 } : Math.abs(q) > 1e-15 ? { x: q, y: large - p } : p >= r ? { x: 1, y: 0 } : { x: 0, y: 1 };
  const len = Math.hypot(u.x, u.y);
  u = { x: u.x / len, y: u.y / len };
  // The far side is where the vanishing line (F's third row) lies: w = l·(p, 1) falls towards 0 there.
  const l = F[2];
  const w0 = l[0] * centre.x + l[1] * centre.y + l[2];
  const slope = (l[0] * u.x + l[1] * u.y) / w0;
  let sign = 0;
  if (Math.abs(slope) > 1e-7) sign = slope < 0 ? 1 : -1;
  else if (farSideHint) {
    const along = (farSideHint.x - centre.x) * u.x + (farSideHint.y - centre.y) * u.y;
    if (Math.abs(along) >= 0.5) sign = along > 0 ? 1 : -1;
  }
  const dir = sign === 0 ? u : { x: sign * u.x, y: sign * u.y };
  const toward = (degrees(Math.atan2(-dir.y, dir.x)) + 360) % 360;
  return { tiltDeg, towardDeg: toward, sideKnown: sign !== 0 };
}

function checkTilt(tiltDeg: number) {
  if (tiltDeg > maxTiltDeg) {
    throw new GeometryError(
      `The marks imply a camera tilted ${Math.round(tiltDeg)}° off vertical (more than ${maxTiltDeg}°); check that each point is where it should be.`,
    );
  }
}

/** The correction from the view setup's marks and its rotation centre (image px). */
export function viewCorrection(marks: TiltMarks, centre: Point, mirrored: boolean, rimConstruction: RimConstruction = "pole-polar"): ViewCorrection {
  if (marks.kind === "rim") {
    const ellipse: Ellipse = fitEllipse(marks.points);
    const meanRadius = Math.sqrt(ellipse.a * ellipse.b);
    if (ellipse.rmsResidual > Math.max(maxRimResidualPx, maxRimResidualShare * meanRadius)) {
      throw new GeometryError(
        `The rim points do not lie on one ellipse: they sit ${ellipse.rmsResidual.toFixed(1)} px from the best one on average; check that each is on the rim.`,
      );
    }
    const rect = rectifyCircle(ellipse, meanRadius, rimConstruction === "pole-polar" ? centre : null);
    const F = normaliseAt(rect.homography, centre);
    const { tiltDeg, towardDeg, sideKnown } = summarise(F, centre, rimConstruction === "affine" ? farSide(ellipse, centre) : null);
    checkTilt(tiltDeg);
    return {
      homography: F,
      summary: {
        method: "rim ellipse",
        tiltDeg,
        towardDeg,
        sideKnown,
        ellipse: { cx: ellipse.centre.x, cy: ellipse.centre.y, a: ellipse.a, b: ellipse.b, angleDeg: degrees(ellipse.angle) },
        residualPx: ellipse.rmsResidual,
      },
    };
  }
  // Table positions in the orientation of an unmirrored image: right is +x, down is −y.
  const pairs = knownPairs(marks.points, mirrored);
  const G = knownPointsHomography(marks.points, mirrored);
  const F = normaliseAt(G, centre);
  const { tiltDeg, towardDeg, sideKnown } = summarise(F, centre, null);
  checkTilt(tiltDeg);
  // How far the marks sit from where the fitted map puts them, in image px.
  const Ginv = invert(G)!;
  let squares = 0;
  for (const pair of pairs) {
    const back = project(Ginv, pair.to);
    squares += back ? (back.x - pair.from.x) ** 2 + (back.y - pair.from.y) ** 2 : Infinity;
  }
  return { homography: F, summary: { method: "known points", tiltDeg, towardDeg, sideKnown, ellipse: null, residualPx: Math.sqrt(squares / pairs.length) } };
}

/**
 * Under perspective the near side of a circle looks larger, so the ellipse's centre sits a little
 * towards the near side of the centre's image: the far side is from the ellipse's centre towards the marked centre.
 */
function farSide(ellipse: Ellipse, centre: Point): Point {
  return { x: centre.x + (centre.x - ellipse.centre.x), y: centre.y + (centre.y - ellipse.centre.y) };
}

const sides = ["right", "upper right", "top", "upper left", "left", "lower left", "bottom", "lower right"] as const;

/** "tilted 4.8° towards the upper right of the frame" (or, with the side unknown, "… or the lower left"). */
export function tiltInWords(summary: Pick<CorrectionSummary, "tiltDeg" | "towardDeg" | "sideKnown">, format: (deg: number) => string): string {
  const index = Math.round(summary.towardDeg / 45) % 8;
  const side = sides[index]!;
  const opposite = sides[(index + 4) % 8]!;
  const towards = summary.sideKnown ? `the ${side} of the frame` : `the ${side} or the ${opposite} of the frame`;
  return `camera tilted ${format(summary.tiltDeg)}° towards ${towards}`;
}

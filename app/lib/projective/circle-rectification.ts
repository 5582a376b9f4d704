/**
 * A view of a circle (the tank's edge) made metric again. The image of a circle is an ellipse C.
 * The polar of the circle's centre with respect to the circle is the line at infinity, and pole
 * and polar survive any projective map, so the polar of the centre's image with respect to C is
 * the image of the line at infinity, the vanishing line l = C c (Hartley & Zisserman 2004, §2.2.3
 * and §2.7.2). The map that sends l back to infinity (H&Z 2004, eq. 2.19) leaves an affine view of
 * the circle, an ellipse centred on the centre's image; the symmetric square root of that
 * ellipse's matrix turns it into a circle (affine rectification, then metric, H&Z 2004, §2.7).
 *
 * With the ellipse's own centre standing in for the centre's image, l is at infinity and only the
 * affine part remains: the first-order (foreshortening) correction, which needs no centre.
 */
import type { Point } from "../geometry";
import type { Ellipse } from "./ellipse-fit";
import { GeometryError } from "./geometry-error";
import { applyTo, mat3, multiply, transpose, type Mat3, type Vec3 } from "./matrix";

const translation = (dx: number, dy: number): Mat3 =>
  mat3([
    [1, 0, dx],
    [0, 1, dy],
    [0, 0, 1],
  ]);

/** The symmetric positive square root of a symmetric positive-definite 2 × 2 matrix [[p, q], [q, r]]. */
function symmetricSqrt(p: number, q: number, r: number): [number, number, number] {
  const s = Math.sqrt(p * r - q * q);
  const t = Math.sqrt(p + r + 2 * s);
  return [(p + s) / t, q / t, (r + s) / t];
}

export interface CircleRectification {
  /** image → a plane where the circle is a circle of `radius` about the origin (the centre's image goes to the origin) */
  homography: Mat3;
  /** the vanishing line in image pixels (homogeneous), null for the affine construction */
  vanishingLine: Vec3 | null;
}

/**
 * The rectifying homography from the rim's ellipse and, when given, the image of the circle's
 * centre (then the projective part too); `radius` is the circle's radius in the output's units.
 */
export function rectifyCircle(ellipse: Ellipse, radius: number, centreImage: Point | null = null): CircleRectification {
  const c = centreImage ?? ellipse.centre;
  const C = ellipse.conic;
  // The conic with the centre's image moved to the origin.
  const T = translation(-c.x, -c.y);
  const Tinv = translation(c.x, c.y);
  const Cc = multiply(transpose(Tinv), multiply(C, Tinv));
  const inside = Cc[2][2];
  // The conic's sign: negative inside (the fit's quadratic part is positive definite).
  const quadSign = Math.sign(Cc[0][0] + Cc[1][1]);
  if (!(inside * quadSign < 0))
    throw new GeometryError("The rotation centre lies outside the ellipse through the rim points; check the centre and the rim points.");
  // l = Cc·(0, 0, 1), scaled so that its third entry is 1.
  const l: Vec3 = [Cc[0][2] / inside, Cc[1][2] / inside, 1];
  const Hp = centreImage
    ? mat3([
        [1, 0, 0],
        [0, 1, 0],
        [l[0], l[1], 1],
      ])
    : mat3([
        [1, 0, 0],
        [0, 1, 0],
        [0, 0, 1],
      ]);
  // The conic after Hp: Hp⁻ᵀ Cc Hp⁻¹, with Hp⁻¹ = [[1, 0, 0], [0, 1, 0], [−l₁, −l₂, 1]].
  const HpInv = mat3([
    [1, 0, 0],
    [0, 1, 0],
    [-Hp[2][0], -Hp[2][1], 1],
  ]);
  const Ca = multiply(transpose(HpInv), multiply(Cc, HpInv));
  // Affine now: an ellipse about the origin, xᵀ S x = 1 with S = −Ca₂ₓ₂ / Ca₃₃ (its linear terms vanish when the centre is right).
  const k = -1 / Ca[2][2];
  const p = Ca[0][0] * k;
  const q = Ca[0][1] * k;
  const r = Ca[1][1] * k;
  if (!(p > 0 && r > 0 && p * r - q * q > 0))
    throw new GeometryError("The rim points and the rotation centre do not describe a circle seen in perspective; check both.");
  const [a, b, d] = symmetricSqrt(p, q, r);
  const A = mat3([
    [a * radius, b * radius, 0],
    [b * radius, d * radius, 0],
    [0, 0, 1],
  ]);
  const homography = multiply(A, multiply(Hp, T));
  const vanishingLine = centreImage ? applyTo(transpose(T), l) : null;
  return { homography, vanishingLine };
}

import { describe, expect, it } from "vitest";
import { tiltedCamera } from "../../../tests/fixtures/tilted-camera";
import { rectifyCircle } from "./circle-rectification";
import { fitEllipse } from "./ellipse-fit";
import { project } from "./homography";
import { GeometryError } from "./geometry-error";

const rim = (r: number) => Array.from({ length: 12 }, (_, i) => ({ x: r * Math.cos((i * Math.PI) / 6), y: r * Math.sin((i * Math.PI) / 6) }));
/** Plane points (cm) spread over the tank. */
const probes = [
  { x: 4, y: 1.8 },
  { x: -9, y: 5 },
  { x: 7, y: -10 },
  { x: -3, y: -12 },
  { x: 11, y: 6 },
];

describe("rectifyCircle (pole and polar, Hartley & Zisserman 2004, §2.2.3, §2.7)", () => {
  for (const tilt of [3, 8]) {
    it(`with the centre's image, undoes an exact ${tilt}° perspective view: every plane point comes back at its distance from the centre, to 1e-9 cm`, () => {
      const camera = tiltedCamera(tilt, 30);
      const ellipse = fitEllipse(rim(14).map((p) => camera.project(p)));
      const { homography, vanishingLine } = rectifyCircle(ellipse, 14, camera.project({ x: 0, y: 0 }));
      expect(vanishingLine).not.toBeNull();
      for (const p of probes) {
        const q = project(homography, camera.project(p))!;
        expect(Math.hypot(q.x, q.y)).toBeCloseTo(Math.hypot(p.x, p.y), 9);
      }
      // Angles too: the rectified probes differ from the plane's by one rotation (a flip would not keep the turn's sign).
      const turned = probes.map((p) => {
        const q = project(homography, camera.project(p))!;
        return Math.atan2(q.y, q.x) + Math.atan2(p.y, p.x);
      });
      for (const a of turned) expect(Math.cos(a - turned[0]!)).toBeCloseTo(1, 12);
    });
  }

  it("without the centre's image (affine only) the same 8° view is left off by 1–3 mm: the perspective part goes uncorrected", () => {
    const camera = tiltedCamera(8, 30);
    const ellipse = fitEllipse(rim(14).map((p) => camera.project(p)));
    const { homography, vanishingLine } = rectifyCircle(ellipse, 14);
    expect(vanishingLine).toBeNull();
    const centre = project(homography, camera.project({ x: 0, y: 0 }))!;
    const worst = Math.max(
      ...probes.map((p) => {
        const q = project(homography, camera.project(p))!;
        return Math.abs(Math.hypot(q.x - centre.x, q.y - centre.y) - Math.hypot(p.x, p.y));
      }),
    );
    expect(worst).toBeGreaterThan(0.1);
    expect(worst).toBeLessThan(0.3);
  });

  it("refuses a centre outside the ellipse", () => {
    const camera = tiltedCamera(5, 30);
    const ellipse = fitEllipse(rim(14).map((p) => camera.project(p)));
    expect(() => rectifyCircle(ellipse, 14, camera.project({ x: 20, y: 0 }))).toThrow(GeometryError);
    expect(() => rectifyCircle(ellipse, 14, camera.project({ x: 20, y: 0 }))).toThrow(/outside the ellipse/);
  });
});

import { describe, expect, it } from "vitest";
import { deRotate, imageToTable, reRotate, rotatingFrameToImage, tableToImage, trackToRotatingFrame } from "./frames";

const view = { centre: { x: 320, y: 240 }, pxPerM: 1000, mirrored: false };

describe("image pixels to the frame seen from above", () => {
  it("flips the image's downward rows so y points up, and scales to metres", () => {
    const right = imageToTable({ x: 420, y: 240 }, view);
    expect(right.x).toBeCloseTo(0.1, 15);
    expect(right.y).toBeCloseTo(0, 15);
    const up = imageToTable({ x: 320, y: 140 }, view);
    expect(up.x).toBe(0);
    expect(up.y).toBeCloseTo(0.1, 15);
  });

  it("flips x for a mirrored view, so a counterclockwise turn stays counterclockwise", () => {
    const p = imageToTable({ x: 420, y: 140 }, { ...view, mirrored: true });
    expect(p.x).toBeCloseTo(-0.1, 15);
    expect(p.y).toBeCloseTo(0.1, 15);
  });

  it("works in pixel units when there is no scale", () => {
    const p = imageToTable({ x: 330, y: 250 }, { ...view, pxPerM: null });
    expect(p).toEqual({ x: 10, y: -10 });
  });

  it("round-trips through tableToImage, mirrored or not", () => {
    for (const mirrored of [false, true]) {
      const v = { ...view, mirrored };
      const back = tableToImage(imageToTable({ x: 123.4, y: 56.7 }, v), v);
      expect(back.x).toBeCloseTo(123.4, 10);
      expect(back.y).toBeCloseTo(56.7, 10);
    }
  });
});

describe("de-rotation of a lab-fixed view", () => {
  it("holds a mark fixed to a counterclockwise table still in the rotating frame", () => {
    const omega = 0.8;
    const t0 = 2;
    // A mark at (0.2, 0) at t0 turns counterclockwise in the lab frame.
    const lab = [0, 0.5, 1.3, 4].map((dt) => ({
      t: t0 + dt,
      x: 0.2 * Math.cos(omega * dt),
      y: 0.2 * Math.sin(omega * dt),
    }));
    for (const p of deRotate(lab, omega, t0)) {
      expect(p.x).toBeCloseTo(0.2, 12);
      expect(p.y).toBeCloseTo(0, 12);
    }
  });

  it("uses each point's own time (uneven frame times)", () => {
    const pts = [
      { t: 0, x: 1, y: 0 },
      { t: 0.1, x: 1, y: 0 },
      { t: 0.35, x: 1, y: 0 },
    ];
    const rot = deRotate(pts, 2, 0);
    expect(Math.atan2(rot[2]!.y, rot[2]!.x)).toBeCloseTo(-0.7, 12);
    const back = reRotate(rot, 2, 0);
    back.forEach((p, i) => {
      expect(p.x).toBeCloseTo(pts[i]!.x, 12);
      expect(p.y).toBeCloseTo(pts[i]!.y, 12);
    });
  });

  it("draws a rotating-frame point back onto the image at t₀ and later", () => {
    const omega = 1;
    const t0 = 5;
    const img = { x: 400, y: 200, t: 7 };
    const [rot] = trackToRotatingFrame([img], view, "lab", omega, t0);
    const atT = rotatingFrameToImage(rot!, view, "lab", omega, t0, img.t);
    expect(atT.x).toBeCloseTo(img.x, 9);
    expect(atT.y).toBeCloseTo(img.y, 9);
    const [same] = trackToRotatingFrame([img], view, "rotating", omega, t0);
    const drawn = rotatingFrameToImage(same!, view, "rotating", omega, t0, 100);
    expect(drawn.x).toBeCloseTo(img.x, 9);
  });
});

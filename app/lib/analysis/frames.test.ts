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

describe("a camera not quite overhead, corrected in imageToTable and tableToImage", () => {
  it("puts an exactly projected table point back where it lies on the table, and draws it back onto the image", async () => {
    const { tiltedCamera } = await import("../../../tests/fixtures/tilted-camera");
    const { viewCorrection } = await import("../projective/view-correction");
    const camera = tiltedCamera(6, 120);
    const centre = camera.project({ x: 0, y: 0 });
    const rim = Array.from({ length: 8 }, (_, i) => camera.project({ x: 14 * Math.cos((i * Math.PI) / 4), y: 14 * Math.sin((i * Math.PI) / 4) }));
    const { homography } = viewCorrection({ kind: "rim", points: rim }, centre, false);
    const tilted = { centre, pxPerM: 1200, mirrored: false, correction: homography };
    const plain = { centre, pxPerM: 1200, mirrored: false };
    const p = { x: 0.09, y: -0.05 };
    const seen = camera.project({ x: p.x * 100, y: p.y * 100 });
    const withCorrection = imageToTable(seen, tilted);
    const back = tableToImage(withCorrection, tilted);
    expect(back.x).toBeCloseTo(seen.x, 9);
    expect(back.y).toBeCloseTo(seen.y, 9);
    // Distances between two corrected points keep the table's ratio; the uncorrected ones do not.
    const q = { x: -0.11, y: 0.02 };
    const seenQ = camera.project({ x: q.x * 100, y: q.y * 100 });
    const ratio = (a: { x: number; y: number }, b: { x: number; y: number }) => Math.hypot(a.x, a.y) / Math.hypot(b.x, b.y);
    expect(ratio(imageToTable(seen, tilted), imageToTable(seenQ, tilted))).toBeCloseTo(ratio(p, q), 9);
    expect(Math.abs(ratio(imageToTable(seen, plain), imageToTable(seenQ, plain)) - ratio(p, q))).toBeGreaterThan(1e-3);
  });
});

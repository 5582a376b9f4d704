import { describe, expect, it } from "vitest";
import { tiltedCamera } from "../../tests/fixtures/tilted-camera";
import type { SetupValues } from "./setup-marks";
import { liveTilt, tiltReadout } from "./tilt-preview";

const camera = tiltedCamera(6, 90);
const table = [
  { x: 10, y: 0 },
  { x: 0, y: 10 },
  { x: -10, y: 0 },
  { x: 0, y: -10 },
  { x: 7, y: 7 },
];
const known = table.map((t) => ({ ...camera.project(t), tableXCm: t.x, tableYCm: t.y }));
const base: SetupValues = {
  centre: camera.project({ x: 0, y: 0 }),
  edge: null,
  scalePoints: null,
  scaleLengthCm: null,
  mirrored: false,
  rateMark: null,
  rimPoints: [],
  knownPoints: [],
};

describe("the tilt preview of known points", () => {
  it("counts the points placed until there are four", () => {
    const t = liveTilt({ ...base, knownPoints: known.slice(0, 2) });
    expect(t.correction).toBeNull();
    expect(tiltReadout(t, 2)).toBe("2 of at least 4 known points placed.");
  });
  it("names the point still without a table position", () => {
    const t = liveTilt({ ...base, knownPoints: [...known.slice(0, 3), { ...known[3]!, tableXCm: null }] });
    expect(tiltReadout(t, 4)).toBe("Known point 4 needs its place on the table: x and y in cm, as numbers.");
  });
  it("reads the lean from four, and says four cannot show a misplaced point", () => {
    const t = liveTilt({ ...base, knownPoints: known.slice(0, 4) });
    expect(t.fit?.points).toHaveLength(4);
    expect(tiltReadout(t, 4)).toBe(
      "Camera tilted 6.0° towards the top of the frame. Four points fix the map exactly, so it cannot show a misplaced one: add a fifth to check them.",
    );
  });
  it("gives the residual from five", () => {
    const t = liveTilt({ ...base, knownPoints: known });
    expect(tiltReadout(t, 5)).toMatch(
      /^Camera tilted 6\.0° towards the top of the frame; the points sit 0\.00 px from where the fitted map puts them on average\.$/,
    );
  });
  it("asks for the rotation centre first", () => {
    expect(tiltReadout(liveTilt({ ...base, centre: null, knownPoints: known }), 5)).toBe("Mark the rotation centre too: the correction is built about it.");
  });
});

describe("the tilt preview of rim points", () => {
  const rim = (project: (p: { x: number; y: number }) => { x: number; y: number }, wobblePx = 0) =>
    [10, 80, 150, 200, 260, 320].map((deg, i) => {
      const p = project({ x: 14 * Math.cos((deg * Math.PI) / 180), y: 14 * Math.sin((deg * Math.PI) / 180) });
      // A click's placing: a few tenths of a pixel either way.
      return { x: p.x + (i % 2 ? wobblePx : -wobblePx), y: p.y + (i % 3 ? -wobblePx : wobblePx) };
    });

  it("says when the ellipse's axes differ by less than a pixel, so a lean that small is not told from none", () => {
    const overhead = tiltedCamera(0, 0);
    const t = liveTilt({ ...base, centre: overhead.project({ x: 0, y: 0 }), rimPoints: rim((p) => overhead.project(p), 0.3) });
    expect(t.correction?.summary.ellipse).not.toBeNull();
    expect(tiltReadout(t, 0)).toMatch(
      / Its axes differ by only 0\.\d px, finer than a click places a point at 1× zoom, so a lean this small cannot be told from none/,
    );
  });

  it("reads a lean whose axes differ by more without that warning", () => {
    const leaning = tiltedCamera(12, 90);
    const t = liveTilt({ ...base, centre: leaning.project({ x: 0, y: 0 }), rimPoints: rim((p) => leaning.project(p)) });
    expect(tiltReadout(t, 0)).toMatch(/^Camera tilted 12\.0° towards the top of the frame; the points sit 0\.00 px from their ellipse on average\.$/);
  });
});

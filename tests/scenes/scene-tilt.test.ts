/**
 * A camera not quite overhead, on the ray-traced scenes tilted 5° (tests/fixtures/scenes: POV-Ray,
 * the camera's axis leaning towards azimuth 30°, aimed at the water's centre). The twelve points
 * where the water meets the wall (truth.json's waterLine, the plane the float floats in) and the
 * rotation centre give the view correction (app/lib/projective: Fitzgibbon, Pilu & Fisher 1999
 * ellipse; Hartley & Zisserman 2004 pole and polar); the theory check must then find f within
 * 0.3 % of 2Ω, on the tracker's tracks and on the truth's own track (the float's visible centre
 * frame by frame, which leaves the tracker's errors out). The figures without the correction are
 * printed beside them. Stacks come from the cache and are rendered first where missing
 * (`npm run scenes`): a missing POV-Ray fails the test, it does not skip it.
 */
import { afterAll, describe, expect, it } from "vitest";
import { trackFrameStack } from "../../app/.server/tracking/track-frame-stack";
import { closeTrackingPool } from "../../app/.server/tracking/tracking-pool";
import { viewCorrection } from "../../app/lib/projective/view-correction";
import { checkSceneTracks, viewSetup } from "../fixtures/scenes/measure-scene";
import { ensureSceneStack } from "../fixtures/scenes/render-scene-stack";
import { sceneVariants, tiltAzimuthDeg } from "../fixtures/scenes/scene-model";

afterAll(() => closeTrackingPool());

/** f's error (%) on the tracker's tracks with the correction, from each scene's first test. */
const trackedFigures = new Map<string, number | null>();

const tilted = sceneVariants.filter((v) => v.tiltDeg !== 0 && v.tracer === "float");

describe("the tilt correction on ray-traced scenes with the camera tilted 5°", () => {
  it("has tilted float scenes to test", () => {
    expect(tilted.map((v) => v.name)).toEqual(["rotating-float-tilt5", "lab-float-tilt5"]);
  });

  for (const variant of tilted) {
    it(`${variant.name}: the water line's ellipse reads about ${variant.tiltDeg}° towards the upper right, and on the truth's own track f comes within 0.3 % of 2Ω after the correction, nearer than without`, async () => {
      const stack = await ensureSceneStack(variant);
      const { truth } = stack;
      const centre = truth.centre;
      const waterLine = viewCorrection({ kind: "rim", points: truth.waterLine.map((p) => p.px) }, centre, false);
      const affine = viewCorrection({ kind: "rim", points: truth.waterLine.map((p) => p.px) }, centre, false, "affine");
      const rimTop = viewCorrection({ kind: "rim", points: truth.rimTop.map((p) => p.px) }, centre, false);
      const truthTrack = [{ id: 1, points: truth.frames.map((f) => ({ t: f.t, x: f.x, y: f.y })) }];
      const setup = viewSetup(truth);
      const tracked = await trackFrameStack({ files: stack.files, times: stack.files.map((_, i) => i / truth.fps), setup });
      const figures = {
        scene: variant.name,
        tilt: {
          tiltDeg: waterLine.summary.tiltDeg,
          towardDeg: waterLine.summary.towardDeg,
          sideKnown: waterLine.summary.sideKnown,
          residualPx: waterLine.summary.residualPx,
        },
        truthTrack: {
          without: checkSceneTracks(truthTrack, truth).fErrorPercent,
          corrected: checkSceneTracks(truthTrack, truth, waterLine.homography).fErrorPercent,
          affineOnly: checkSceneTracks(truthTrack, truth, affine.homography).fErrorPercent,
          fromRimTop: checkSceneTracks(truthTrack, truth, rimTop.homography).fErrorPercent,
        },
        tracked: {
          tracks: tracked.tracks.length,
          without: checkSceneTracks(tracked.tracks, truth),
          corrected: checkSceneTracks(tracked.tracks, truth, waterLine.homography),
        },
      };
      console.log(JSON.stringify(figures));
      expect(Math.abs(waterLine.summary.tiltDeg - variant.tiltDeg)).toBeLessThan(0.5);
      expect(waterLine.summary.sideKnown).toBe(true);
      expect(Math.abs(waterLine.summary.towardDeg - tiltAzimuthDeg)).toBeLessThan(5);
      expect(Math.abs(figures.truthTrack.corrected ?? Infinity)).toBeLessThanOrEqual(0.3);
      // The correction must do better than none where the tracker's errors are left out.
      expect(Math.abs(figures.truthTrack.corrected ?? Infinity)).toBeLessThan(Math.abs(figures.truthTrack.without ?? 0));
      trackedFigures.set(variant.name, figures.tracked.corrected.fErrorPercent);
    });

    it(`${variant.name}: on the tracker's own tracks, f within 0.3 % of 2Ω after the correction (issue 16's target; the tracker's errors count here)`, () => {
      expect(trackedFigures.has(variant.name)).toBe(true);
      expect(Math.abs(trackedFigures.get(variant.name) ?? Infinity)).toBeLessThanOrEqual(0.3);
    });
  }
});

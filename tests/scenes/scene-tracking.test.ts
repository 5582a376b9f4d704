/**
 * Issue 16's targets on the ray-traced tank scenes (tests/fixtures/scenes: POV-Ray, a 28 cm tank
 * with a polar grid, an acrylic wall, refracting water, a soft-shadowing lamp and a second lamp's
 * glare, a white float or a dye patch, noise and JPEG at quality 85, 640×360; co-rotating and
 * lab-fixed cameras, straight down or tilted 5°). Stacks come from the cache and are rendered
 * first where missing (`npm run scenes`). Tankside tracks each as the server would, with the
 * view setup a technician gives (centre, tank edge, scale, camera mode, set rate), and must find
 * the tracer in one track over at least 98 % of the frames, within 0.12 px RMS for a float and
 * 0.2 px for dye of the truth, with f within 0.3 % of 2Ω and the verdict "agrees".
 * On the tilted scenes the view setup also carries the rim marks a technician would place (the
 * water line's points, measure-scene.ts): the tracker's turning background and the check both use
 * their correction (Decisions 69 and 76). TANKSIDE_SCENE_VARIANTS (names, comma-separated) limits
 * the run to those scenes: `npm test` gives the ones that meet the targets (scripts/scenes-in-suite.mjs).
 */
import { afterAll, describe, expect, it } from "vitest";
import { closeTrackingPool } from "../../app/.server/tracking/tracking-pool";
import { measureScene } from "../fixtures/scenes/measure-scene";
import { ensureSceneStack } from "../fixtures/scenes/render-scene-stack";
import { variantsNamed } from "../fixtures/scenes/scene-model";

afterAll(() => closeTrackingPool());

describe("tracking on ray-traced tank scenes (issue 16's targets)", () => {
  for (const variant of variantsNamed((process.env.TANKSIDE_SCENE_VARIANTS ?? "").split(",").filter(Boolean))) {
    const rmsLimit = variant.tracer === "float" ? 0.12 : 0.2;
    it(`${variant.name}: ≥ 98 % of frames in one track, RMS ≤ ${rmsLimit} px, f within 0.3 % of 2Ω, "agrees"`, async () => {
      const stack = await ensureSceneStack(variant);
      const m = await measureScene(stack);
      console.log(JSON.stringify(m));
      expect(m.longestTrackShare).toBeGreaterThanOrEqual(0.98);
      expect(m.rmsErrorPx).not.toBeNull();
      expect(m.rmsErrorPx ?? Infinity).toBeLessThanOrEqual(rmsLimit);
      expect(Math.abs(m.fErrorPercent ?? Infinity)).toBeLessThanOrEqual(0.3);
      expect(m.verdict).toBe("agrees");
    });
  }
});

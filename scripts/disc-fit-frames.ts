/**
 * The float's disc fit (app/lib/tracking/disc-fit.ts) frame by frame on a ray-traced scene, against
 * its truth: what limits the track extension of track-extension.ts where a lamp's glare hides
 * the float. `npx tsx scripts/disc-fit-frames.ts rotating-float-tilt5 [first last]` (the scene
 * rendered into TANKSIDE_SCENE_CACHE first, see `npm run scenes`).
 *
 * The stack's background is made as a tracking job makes it (prepareStackSearch, the view setup of
 * measure-scene.ts). The radius and face are measured on the first three frames (radius free) and
 * their medians used, as the extension measures them on a track's clear frames; then each frame's
 * disc is fitted with the radius fixed, started 0.92 px from the truth (0.7, −0.6) within the
 * extension's 4 px reach. The extension starts from the place its parabola foresees instead, so a
 * frame fitted here may differ from the job's by the coarse look's choice.
 *
 * Prints one JSON line per frame (error against the truth's visible centre, the fit's standard
 * deviations and the errors over them, residual RMS, the frame's noise, the face's mean rise over
 * the background it covers, and whether the fit's larger standard deviation passes the
 * extension's limit maxFitSdPx) and a summary line: frames kept, refused and not fitted, and over
 * the kept frames the RMS error, the RMS of error / standard deviation in x and y (near 1 when
 * the stated uncertainty is honest) and the share of those ratios beyond ±2 (about 0.05 for a
 * unit normal).
 */
import { readFrameSize } from "../app/.server/tracking/decode-frame";
import { prepareStackSearch } from "../app/.server/tracking/track-frame-stack";
import { maxFitSdPx } from "../app/lib/tracking/track-extension";
import { viewSetup } from "../tests/fixtures/scenes/measure-scene";
import { ensureSceneStack } from "../tests/fixtures/scenes/render-scene-stack";
import { variantsNamed } from "../tests/fixtures/scenes/scene-model";
import { runTrackingScript } from "./run-tracking-script";

const round = (v: number, digits = 3): number => Number(v.toFixed(digits));
const median = (values: number[]): number => {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[sorted.length >> 1]!;
};
const reachPx = 4;
const startOff = { x: 0.7, y: -0.6 };

async function main(): Promise<void> {
  const [name, firstArg, lastArg] = process.argv.slice(2);
  if (!name) throw new Error("Name a scene, e.g. rotating-float-tilt5.");
  const variant = variantsNamed([name])[0]!;
  const { truth, files } = await ensureSceneStack(variant, (m) => process.stderr.write(`${m}\n`));
  if (truth.tracer !== "float") throw new Error("The disc fit is made for floats only.");
  const first = firstArg === undefined ? 0 : Number(firstArg);
  const last = lastArg === undefined ? files.length - 1 : Number(lastArg);
  const size = await readFrameSize(files[0]!, 0);
  const search = await prepareStackSearch(files, viewSetup(truth), size, undefined, (i) => i / truth.fps, true);

  const radii: number[] = [];
  const faces: number[] = [];
  for (let i = 0; i < 3; i++) {
    const t = truth.frames[i]!;
    const fit = await search.fitDisc(files[i]!, i, { x: t.x, y: t.y, radius: 8, face: 255, reach: 2, fitRadius: true });
    if (fit && Math.max(fit.sdX, fit.sdY) <= maxFitSdPx) {
      radii.push(fit.radius);
      faces.push(fit.face);
    }
  }
  if (radii.length === 0) throw new Error("No clear fit on the first three frames to measure the radius and face on.");
  const radius = median(radii);
  const face = median(faces);
  process.stdout.write(`${JSON.stringify({ scene: truth.variant, radius: round(radius), face: round(face, 1) })}\n`);

  const kept: { ex: number; ey: number; zx: number; zy: number }[] = [];
  const refused: number[] = [];
  const notFitted: number[] = [];
  for (let i = first; i <= last; i++) {
    const t = truth.frames[i]!;
    const fit = await search.fitDisc(files[i]!, i, { x: t.x + startOff.x, y: t.y + startOff.y, radius, face, reach: reachPx, fitRadius: false });
    if (!fit) {
      notFitted.push(i);
      process.stdout.write(`${JSON.stringify({ frame: i, fitted: false })}\n`);
      continue;
    }
    const ex = fit.x - t.x;
    const ey = fit.y - t.y;
    const passes = Math.max(fit.sdX, fit.sdY) <= maxFitSdPx;
    if (passes) kept.push({ ex, ey, zx: ex / fit.sdX, zy: ey / fit.sdY });
    else refused.push(i);
    process.stdout.write(
      `${JSON.stringify({
        frame: i,
        errorX: round(ex),
        errorY: round(ey),
        errorPx: round(Math.hypot(ex, ey)),
        sdX: round(fit.sdX),
        sdY: round(fit.sdY),
        zX: round(ex / fit.sdX, 2),
        zY: round(ey / fit.sdY, 2),
        residualRms: round(fit.residualRms, 2),
        noise: round(fit.noise, 2),
        contrast: round(fit.contrast, 1),
        passesSd: passes,
      })}\n`,
    );
  }
  const rms = (values: number[]): number | null => (values.length ? round(Math.sqrt(values.reduce((s, v) => s + v * v, 0) / values.length)) : null);
  process.stdout.write(
    `${JSON.stringify({
      summary: truth.variant,
      frames: last - first + 1,
      kept: kept.length,
      refused,
      notFitted,
      keptRmsErrorPx: rms(kept.map((k) => Math.hypot(k.ex, k.ey))),
      keptRmsZX: rms(kept.map((k) => k.zx)),
      keptRmsZY: rms(kept.map((k) => k.zy)),
      keptShareAbsZOver2: kept.length ? round(kept.flatMap((k) => [k.zx, k.zy]).filter((z) => Math.abs(z) > 2).length / (2 * kept.length)) : null,
    })}\n`,
  );
}

runTrackingScript(main);

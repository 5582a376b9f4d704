/**
 * `npm run bench:scenes`: Tankside's tracking and theory check on each ray-traced scene
 * (tests/fixtures/scenes; rendered into the cache first where missing, see `npm run scenes`).
 * Prints one JSON line per scene on stdout: frames, the share of frames in the longest track,
 * the number of tracks, the longest track's RMS error against the truth (px; also against the
 * projected centre), the fitted f and its error against 2Ω (%), the verdict, and the seconds the
 * render (null when cached) and the tracking took. `npm run bench:scenes -- lab-float` runs one;
 * `--linear-dye` reads a dye's centre in linear light (Decision 102).
 */
import { measureScene, trackingOptionsFrom } from "../tests/fixtures/scenes/measure-scene";
import { ensureSceneStack } from "../tests/fixtures/scenes/render-scene-stack";
import { variantsNamed } from "../tests/fixtures/scenes/scene-model";
import { runTrackingScript } from "./run-tracking-script";

const round = (v: number | null, digits: number): number | null => (v === null ? null : Number(v.toFixed(digits)));

async function main(): Promise<void> {
  const variants = variantsNamed(process.argv.slice(2));
  for (const variant of variants) {
    const stack = await ensureSceneStack(variant, (m) => process.stderr.write(`${m}\n`));
    const m = await measureScene(stack, trackingOptionsFrom(process.argv));
    process.stdout.write(
      `${JSON.stringify({
        ...m,
        longestTrackShare: round(m.longestTrackShare, 4),
        rmsErrorPx: round(m.rmsErrorPx, 3),
        rmsErrorProjectedPx: round(m.rmsErrorProjectedPx, 3),
        fMeasured: round(m.fMeasured, 5),
        fErrorPercent: round(m.fErrorPercent, 3),
        renderSeconds: round(m.renderSeconds, 1),
        trackSeconds: round(m.trackSeconds, 2),
      })}\n`,
    );
  }
}

runTrackingScript(main);

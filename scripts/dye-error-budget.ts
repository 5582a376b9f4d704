/**
 * `npx tsx scripts/dye-error-budget.ts`: the dye centre's error on made-up copies of the ray-traced
 * scenes' dye patch, one cause added at a time, against an exact background (the frame without
 * the dye, through the same blur). Prints one line per condition: of 24 places and directions of
 * the patch, how many gave a find within 3 px of it, and the RMS error of those finds (px).
 *
 * The patch is the scenes' (tests/fixtures/scenes/tank-parts.inc): an absorbing ellipsoid
 * 3.2 × 1.2 cm across and 0.6 cm deep, its light fading exponentially towards a crimson over
 * 0.35 cm, seen at 12 px/cm and sampled at pixel centres (the scenes render without
 * antialiasing); the post-processing is the scenes' own (render-scene-stack.ts: blur, sensor
 * noise, JPEG, whose chroma sharp subsamples 4:2:0 unless told otherwise). The grid is a polar
 * one like the scenes' bottom (rings every 22 px, spokes every 15°, V-shaped lines 1.7 px to
 * each side, 32 % deep). The shadows are the scenes' two lamps' coloured copies of the patch on
 * the bottom (Decision 90): a sharp one 31 px away, 14 % larger, lit by a quarter of the light,
 * and one 56 px away, 10 % larger, by 35 %; a shadowless fill gives the rest.
 */
import { createRequire } from "node:module";
import sharp from "sharp";
import { createDetector } from "../app/lib/tracking/detect";
import type { OpenCv } from "../app/lib/tracking/opencv-types";
import { planDetection } from "../app/lib/tracking/plan";
import { cropForPlan } from "../app/lib/tracking/plan-crop";
import { gaussian, seededRandom } from "../app/lib/random";
import { postProcess } from "../tests/fixtures/scenes/render-scene-stack";

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const width = 240;
const height = 200;
const tank = { x: 120, y: 100 };
const bottom = 190;
/** The patch's semi-axes (px), thickness (cm), fade distance (cm) and fade colour (tank-parts.inc). */
const patch = { a: 19.2, b: 7.2, depth: 0.6, fadeCm: 0.35, fade: [0.85, 0.12, 0.25] };
/** Each lamp's copy: offset (px) and scale, and the share of the light that lamp gives. */
const copies = [
  { x: -26, y: 17, scale: 1.14, share: 0.25 },
  { x: 48, y: 28, scale: 1.1, share: 0.35 },
];
const places = 24;
/** A find further than this from the patch is not the patch (a shadow copy, a line) and is counted apart. */
const foundWithinPx = 3;

interface Condition {
  name: string;
  grid: boolean;
  shadows: boolean;
  blur: boolean;
  noise: boolean;
  jpeg: "none" | "4:4:4" | "4:2:0";
}

/** The patch's thickness (cm) at a pixel centre, for a patch at `at` whose long axis points along `u`. */
function thickness(col: number, row: number, at: { x: number; y: number }, u: { x: number; y: number }, scale = 1): number {
  const dx = (col - at.x) / scale;
  const dy = (row - at.y) / scale;
  const along = dx * u.x + dy * u.y;
  const across = -dx * u.y + dy * u.x;
  return patch.depth * Math.sqrt(Math.max(0, 1 - (along / patch.a) ** 2 - (across / patch.b) ** 2));
}

/** What a channel lets through `d` cm of dye: exponentially towards the fade colour. */
const through = (d: number, c: number) => 1 - (1 - patch.fade[c]!) * (1 - Math.exp(-d / patch.fadeCm));

/** A polar grid's light at a pixel (1 off the lines). */
function gridLight(col: number, row: number): number {
  const dx = col - tank.x;
  const dy = row - tank.y;
  const r = Math.hypot(dx, dy);
  const ring = Math.abs((r % 22) - 11);
  const step = Math.PI / 12;
  const angle = Math.atan2(dy, dx) + 2 * Math.PI;
  const spoke = r * Math.abs((angle % step) - step / 2);
  const d = Math.min(11 - ring, spoke);
  return 1 - 0.32 * Math.max(0, 1 - d / 1.7);
}

function render(at: { x: number; y: number } | null, axis: number, condition: Condition): Uint8Array {
  const data = new Uint8Array(width * height * 3);
  const u = { x: Math.cos(axis), y: Math.sin(axis) };
  for (let row = 0; row < height; row++) {
    for (let col = 0; col < width; col++) {
      const line = condition.grid ? gridLight(col, row) : 1;
      const seen = at ? thickness(col, row, at, u) : 0;
      const shaded = at && condition.shadows ? copies.map((s) => thickness(col, row, { x: at.x + s.x, y: at.y + s.y }, u, s.scale)) : null;
      for (let c = 0; c < 3; c++) {
        const lit = shaded ? 1 - copies.reduce((sum, s, i) => sum + s.share * (1 - through(shaded[i]!, c)), 0) : 1;
        data[3 * (row * width + col) + c] = Math.round(bottom * line * lit * through(seen, c));
      }
    }
  }
  return data;
}

async function postProcessed(data: Uint8Array, condition: Condition, seed: number, withNoise: boolean): Promise<Uint8Array> {
  const raw = { width, height, channels: 3 as const };
  let out = condition.blur ? new Uint8Array(await sharp(Buffer.from(data), { raw }).blur(postProcess.blurSigmaPx).raw().toBuffer()) : data;
  if (withNoise && condition.noise) {
    const normal = gaussian(seededRandom(seed));
    out = Uint8Array.from(out, (v) => Math.max(0, Math.min(255, Math.round(v + postProcess.noiseSigma * normal()))));
  }
  if (withNoise && condition.jpeg !== "none") {
    const jpeg = await sharp(Buffer.from(out), { raw }).jpeg({ quality: postProcess.jpegQuality, chromaSubsampling: condition.jpeg }).toBuffer();
    out = new Uint8Array(await sharp(jpeg).raw().toBuffer());
  }
  return out;
}

const conditions: Condition[] = [
  { name: "point-sampled, no blur", grid: false, shadows: false, blur: false, noise: false, jpeg: "none" },
  { name: "blurred", grid: false, shadows: false, blur: true, noise: false, jpeg: "none" },
  { name: "blurred, noise", grid: false, shadows: false, blur: true, noise: true, jpeg: "none" },
  { name: "blurred, JPEG 4:4:4", grid: false, shadows: false, blur: true, noise: false, jpeg: "4:4:4" },
  { name: "blurred, JPEG 4:2:0", grid: false, shadows: false, blur: true, noise: false, jpeg: "4:2:0" },
  { name: "blurred, noise, JPEG 4:2:0", grid: false, shadows: false, blur: true, noise: true, jpeg: "4:2:0" },
  { name: "grid, blurred, noise, JPEG 4:2:0", grid: true, shadows: false, blur: true, noise: true, jpeg: "4:2:0" },
  { name: "shadows, blurred", grid: false, shadows: true, blur: true, noise: false, jpeg: "none" },
  { name: "shadows, blurred, noise, JPEG 4:2:0", grid: false, shadows: true, blur: true, noise: true, jpeg: "4:2:0" },
  { name: "grid, shadows, blurred, noise, JPEG 4:2:0", grid: true, shadows: true, blur: true, noise: true, jpeg: "4:2:0" },
];

async function main(): Promise<void> {
  const plan = planDetection({ tracer: "dye", centre: tank, tankEdge: { cx: tank.x, cy: tank.y, r: 95 }, mirrored: false }, width, height);
  const detector = createDetector(cv, plan);
  try {
    for (const condition of conditions) {
      let squares = 0;
      let found = 0;
      for (let k = 0; k < places; k++) {
        const at = { x: 96.3 + (k % 4) * 0.53 + Math.floor(k / 4) * 1.9, y: 84.7 + Math.floor(k / 4) * 1.37 + (k % 4) * 0.9 };
        const axis = 0.3 + 0.41 * k;
        const frame = await postProcessed(render(at, axis, condition), condition, 100 + k, true);
        const background = await postProcessed(render(null, axis, condition), condition, 0, false);
        const image = cropForPlan({ data: frame, width, height, channels: 3 }, plan);
        const nearest = detector
          .detect(image, cropForPlan({ data: background, width, height, channels: 3 }, plan).data)
          .reduce<number | null>((best, d) => Math.min(best ?? Infinity, Math.hypot(d.x - at.x, d.y - at.y)), null);
        if (nearest === null || nearest > foundWithinPx) continue;
        squares += nearest * nearest;
        found++;
      }
      process.stdout.write(
        `${JSON.stringify({ condition: condition.name, found, places, rmsErrorPx: Number(Math.sqrt(squares / Math.max(1, found)).toFixed(3)) })}\n`,
      );
    }
  } finally {
    detector.dispose();
  }
}

main().catch((error: unknown) => {
  process.stderr.write(`${error instanceof Error ? (error.stack ?? error.message) : String(error)}\n`);
  process.exitCode = 1;
});

/**
 * `TANKSIDE_SCENE_CACHE=… npx tsx scripts/dye-background-floor.ts [frames] [--linear-dye]`: on the lab-fixed dye
 * scene (tests/fixtures/scenes, rendered once into the cache), how well the composed turning
 * background (turning-compose.ts) holds the bottom's grid, and how far the dye's centre would
 * move with a background that held it exactly. Frames default to all; `0,6,21` names some.
 *
 * *Lines.* Along circles 30–140 px round the rotation centre (not 45 px, which runs along a
 * ring), each dark spoke the composed background shows is found in the frame and in the
 * background (darkness-weighted centroid within 2.5 px, sampled every ⅛ px along the circle,
 * bilinear, the channels' mean): the frame's position less the background's (positive
 * counter-clockwise in the image), and each one's depth and width (darkness area over depth).
 * Spokes within 35 px of the patch, or with a pixel at 245 or more (glare), are skipped. The
 * offsets are also fitted as one shift of the whole pattern (translationOf).
 *
 * *Centre.* The bottom's grid repeats every 15° (tank-parts.inc) and the table turns 6° a frame,
 * so frames 5, 10, … apart show the same grid under the same lab-fixed lamps and glare: their mean,
 * where none of them holds the dye or its two shadow copies (Decision 90's offsets, with margin),
 * is a dye-free background of this frame with the noise averaged down. The dye detector is run on
 * the frame (whole, in one process, as a background sample is searched) against the composed
 * background and against that one; each error is against the truth.
 */
import { createRequire } from "node:module";
import { decodeFrame } from "../app/.server/tracking/decode-frame";
import { stillBackground } from "../app/.server/tracking/stack-background";
import { trackingPool } from "../app/.server/tracking/tracking-pool";
import { createDetector } from "../app/lib/tracking/detect";
import type { OpenCv } from "../app/lib/tracking/opencv-types";
import { planDetection, planKey } from "../app/lib/tracking/plan";
import { bilinear } from "../app/lib/tracking/turning-background";
import { backgroundAt } from "../app/lib/tracking/turning-compose";
import { trackingOptionsFrom, viewSetup } from "../tests/fixtures/scenes/measure-scene";
import { ensureSceneStack } from "../tests/fixtures/scenes/render-scene-stack";
import { gridSpokeStepDeg, variantsNamed } from "../tests/fixtures/scenes/scene-model";
import { runTrackingScript } from "./run-tracking-script";

const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const radii = [30, 60, 80, 100, 120, 140];
const stepsPerPx = 8;
const halfWindowPx = 2.5;
/** Where the dye's shadow copies lie from it in this scene (px, Decision 90), and how far round the dye and a copy is left out. */
const copyOffsets = [
  { x: 48, y: 28 },
  { x: -26, y: 17 },
];
const dyeReachPx = 50;
const copyReachPx = 35;

const grey = (image: Uint8Array, pixels: number) =>
  Float32Array.from({ length: pixels }, (_, p) => (image[3 * p]! + image[3 * p + 1]! + image[3 * p + 2]!) / 3);
const median = (values: number[]) => [...values].sort((a, b) => a - b)[values.length >> 1] ?? Number.NaN;

/** A dip's darkness-weighted centroid (px along the profile from `at`), darkness area and depth. */
function dip(profile: Float64Array, at: number): { pos: number; area: number; depth: number } {
  const n = profile.length;
  const win = Math.round(halfWindowPx * stepsPerPx);
  const read = (i: number) => profile[(((at + i) % n) + n) % n]!;
  const base = (read(-win - stepsPerPx) + read(win + stepsPerPx)) / 2;
  let moment = 0;
  let area = 0;
  let depth = 0;
  for (let k = -win; k <= win; k++) {
    const d = Math.max(0, base - read(k));
    moment += d * k;
    area += d;
    depth = Math.max(depth, d);
  }
  return { pos: area > 0 ? moment / area / stepsPerPx : Number.NaN, area: area / stepsPerPx, depth };
}

/**
 * The shift (x, y) of the frame's lines against the background's that best explains the spokes'
 * offsets along their circles (least squares, offset = shift · (−sin θ, cos θ)): a rotation centre
 * or angle off by a little moves the whole turned pattern by about such a shift, which the mean
 * offset round a circle does not show.
 */
function translationOf(lines: readonly { angle: number; offset: number }[]): { x: number; y: number } {
  let sxx = 0;
  let sxy = 0;
  let syy = 0;
  let bx = 0;
  let by = 0;
  for (const { angle, offset } of lines) {
    const tx = -Math.sin(angle);
    const ty = Math.cos(angle);
    sxx += tx * tx;
    sxy += tx * ty;
    syy += ty * ty;
    bx += tx * offset;
    by += ty * offset;
  }
  const det = sxx * syy - sxy * sxy;
  return det > 0 ? { x: (syy * bx - sxy * by) / det, y: (sxx * by - sxy * bx) / det } : { x: Number.NaN, y: Number.NaN };
}

async function main(): Promise<void> {
  const [variant] = variantsNamed(["lab-dye"]);
  const { truth, files } = await ensureSceneStack(variant!, (m) => process.stderr.write(`${m}\n`));
  const named = process.argv.slice(2).find((a) => !a.startsWith("-"));
  const frames = named ? named.split(",").map(Number) : files.map((_, i) => i);
  const plan = planDetection({ ...viewSetup(truth), ...trackingOptionsFrom(process.argv) }, truth.width, truth.height);
  const { still, turning } = await stillBackground(files, plan, planKey(plan), await trackingPool(), undefined, (i) => i / truth.fps);
  if (!turning) throw new Error("No turning background was made for this scene.");
  const { width, height } = plan.crop;
  const pixels = width * height;
  const { cx, cy } = turning.turn;
  const turnDeg = (Math.abs(turning.turn.rate) / truth.fps) * (180 / Math.PI);
  const period = Array.from({ length: 20 }, (_, k) => k + 1).find((k) => Math.abs(((k * turnDeg + 1e-6) % gridSpokeStepDeg) - 1e-6) < 1e-6);
  if (!period) throw new Error("The grid does not come back to its place within 20 frames.");
  const detector = createDetector(cv, plan);
  const decoded = new Map<number, Uint8Array>();
  const frame = async (k: number) => decoded.get(k) ?? decoded.set(k, await decodeFrame(files[k]!, k, plan)).get(k)!;
  const truthAt = (k: number) => ({ x: truth.frames[k]!.x - plan.crop.left, y: truth.frames[k]!.y - plan.crop.top });
  const centreError = (image: Uint8Array, background: Uint8Array, k: number): number => {
    const finds = detector.detect({ data: image, width, height, channels: 3 }, background, undefined, still);
    const t = truthAt(k);
    return Math.min(...finds.map((d) => Math.hypot(d.x - plan.crop.left - t.x, d.y - plan.crop.top - t.y)));
  };
  const squares = { composed: 0, dyeFree: 0 };
  const offsets: number[] = [];
  try {
    for (const f of frames) {
      const image = await frame(f);
      const composed = new Uint8Array(still.length);
      backgroundAt(still, turning, image, width, height, turning.turn.rate * (f / truth.fps), composed);
      const seen = grey(image, pixels);
      const held = grey(composed, pixels);
      const dye = truthAt(f);
      const lines: { angle: number; offset: number; depthRatio: number; widthFrame: number; widthComposed: number }[] = [];
      for (const r of radii) {
        const n = Math.round(2 * Math.PI * r * stepsPerPx);
        const along = (img: Float32Array) =>
          Float64Array.from({ length: n }, (_, i) =>
            bilinear(img, width, height, cx + r * Math.cos((2 * Math.PI * i) / n), cy + r * Math.sin((2 * Math.PI * i) / n)),
          );
        const inFrame = along(seen);
        const inComposed = along(held);
        const half = Math.floor(n / (360 / gridSpokeStepDeg) / 2);
        for (let i = 0; i < n; i++) {
          let lowest = true;
          let highest = -1;
          for (let k = -half; k <= half; k++) {
            const v = inComposed[(i + k + n) % n]!;
            if (k !== 0 && v < inComposed[i]!) lowest = false;
            highest = Math.max(highest, v);
            if (inFrame[(i + k + n) % n]! >= 245) highest = Infinity;
          }
          if (!lowest || !(highest - inComposed[i]! >= 8) || highest === Infinity) continue;
          const angle = (2 * Math.PI * i) / n;
          if (Math.hypot(cx + r * Math.cos(angle) - dye.x, cy + r * Math.sin(angle) - dye.y) < 35) continue;
          const a = dip(inFrame, i);
          const b = dip(inComposed, i);
          if (!Number.isFinite(a.pos) || !Number.isFinite(b.pos) || !(b.depth > 0)) continue;
          lines.push({ angle, offset: a.pos - b.pos, depthRatio: a.depth / b.depth, widthFrame: a.area / a.depth, widthComposed: b.area / b.depth });
        }
      }
      offsets.push(...lines.map((l) => l.offset));
      // The dye-free background: frames a whole number of grid periods away, the dye and its copies left out.
      const sum = new Float64Array(still.length);
      const count = new Uint16Array(pixels);
      for (let k = f % period; k < files.length; k += period) {
        if (k === f) continue;
        const other = await frame(k);
        const at = truthAt(k);
        const away = [{ ...at, reach: dyeReachPx }, ...copyOffsets.map((o) => ({ x: at.x + o.x, y: at.y + o.y, reach: copyReachPx }))];
        for (let p = 0; p < pixels; p++) {
          const col = p % width;
          const row = (p - col) / width;
          if (away.some((a) => Math.hypot(col - a.x, row - a.y) < a.reach)) continue;
          count[p] = count[p]! + 1;
          for (let c = 0; c < 3; c++) sum[3 * p + c] = sum[3 * p + c]! + other[3 * p + c]!;
        }
      }
      const dyeFree = Uint8Array.from(composed, (v, q) => (count[Math.floor(q / 3)]! >= 2 ? Math.round(sum[q]! / count[Math.floor(q / 3)]!) : v));
      const errors = { composed: centreError(image, composed, f), dyeFree: centreError(image, dyeFree, f) };
      squares.composed += errors.composed ** 2;
      squares.dyeFree += errors.dyeFree ** 2;
      const mean = lines.reduce((s, l) => s + l.offset, 0) / Math.max(1, lines.length);
      const shift = translationOf(lines);
      process.stdout.write(
        `${JSON.stringify({
          frame: f,
          spokes: lines.length,
          meanOffsetPx: Number(mean.toFixed(3)),
          shiftPx: { x: Number(shift.x.toFixed(3)), y: Number(shift.y.toFixed(3)) },
          rmsOffsetPx: Number(Math.sqrt(lines.reduce((s, l) => s + l.offset ** 2, 0) / Math.max(1, lines.length)).toFixed(3)),
          depthFrameOverComposed: Number(median(lines.map((l) => l.depthRatio)).toFixed(3)),
          widthFramePx: Number(median(lines.map((l) => l.widthFrame)).toFixed(2)),
          widthComposedPx: Number(median(lines.map((l) => l.widthComposed)).toFixed(2)),
          centreErrorComposedPx: Number(errors.composed.toFixed(3)),
          centreErrorDyeFreePx: Number(errors.dyeFree.toFixed(3)),
        })}\n`,
      );
    }
  } finally {
    detector.dispose();
  }
  const all = offsets.reduce((s, v) => s + v, 0) / Math.max(1, offsets.length);
  process.stdout.write(
    `${JSON.stringify({
      frames: frames.length,
      gridPeriodFrames: period,
      spokes: offsets.length,
      meanOffsetPx: Number(all.toFixed(3)),
      rmsCentreComposedPx: Number(Math.sqrt(squares.composed / frames.length).toFixed(3)),
      rmsCentreDyeFreePx: Number(Math.sqrt(squares.dyeFree / frames.length).toFixed(3)),
    })}\n`,
  );
}

runTrackingScript(main);

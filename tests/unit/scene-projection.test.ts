/**
 * The ray-traced scenes' truth is computed (tests/fixtures/scenes/scene-truth.ts), not read back
 * from the renderer; this test renders small white discs lying flat at known places
 * (tests/fixtures/scenes/check.pov: no noise, no antialiasing, as the stacks are rendered) and
 * checks each disc's rendered centroid against the model: off-centre and at several heights,
 * under a slab of water (Snell's law at n = 1.33), turned by the table's macro, with the camera
 * straight down and tilted 6°. Against the centroid of the pixels whose centre rays meet the disc
 * (what the float's truth uses) it must agree to 0.01 px; against the projected centre it differs
 * by where the edge falls among pixel centres, which must stay under 0.2 px. Needs POV-Ray
 * (Debian's povray).
 */
import { spawnSync } from "node:child_process";
import { mkdtempSync, rmSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import sharp from "sharp";
import { afterAll, describe, expect, it } from "vitest";
import { sceneCamera, sceneImage, tablePoint, turnPlan, waterLevelCm } from "../fixtures/scenes/scene-model";
import type { Vec3 } from "../fixtures/scenes/scene-model";
import { projectUnderWater, visibleDiscCentre } from "../fixtures/scenes/scene-truth";
import { scenesDir } from "../fixtures/scenes/render-scene-stack";

const work = mkdtempSync(path.join(os.tmpdir(), "tankside-scene-check-"));
afterAll(() => rmSync(work, { recursive: true, force: true }));

const markerRadiusCm = 0.6;
/** Table points (cm): the axis at the surface, off-centre ones at the surface, on the rim's top and above, and two under water. */
const above: [number, number, number][] = [
  [0, 0, 10.2],
  [9, 4, 10.2],
  [-11, -6, 10.2],
  [-5, 10, 15],
  [12.5, -7, 15],
  [20, 9, 12],
];
const underWater: [number, number, number][] = [
  [6, -8, 9.4],
  [-8, 5, 0.5],
];
const turned = { at: [8, 0, 10.2] as [number, number, number], deg: 40 };

const vector = (v: Vec3): string => `<${v.map((n) => n.toPrecision(15)).join(", ")}>`;

interface Blob {
  x: number;
  y: number;
  pixels: number;
}

/** Connected bright regions of a grey image, each with its brightness-weighted centroid. */
function blobs(data: Buffer, width: number, height: number): Blob[] {
  const seen = new Uint8Array(width * height);
  const out: Blob[] = [];
  for (let start = 0; start < width * height; start++) {
    if (seen[start] || (data[start] ?? 0) < 40) continue;
    const stack = [start];
    seen[start] = 1;
    let w = 0;
    let sx = 0;
    let sy = 0;
    let pixels = 0;
    while (stack.length > 0) {
      const p = stack.pop() ?? 0;
      const value = data[p] ?? 0;
      const x = p % width;
      const y = (p - x) / width;
      w += value;
      sx += value * x;
      sy += value * y;
      pixels++;
      for (const q of [p - 1, p + 1, p - width, p + width]) {
        if (q < 0 || q >= width * height || seen[q] || (data[q] ?? 0) < 40) continue;
        if (Math.abs((q % width) - x) > 1) continue;
        seen[q] = 1;
        stack.push(q);
      }
    }
    out.push({ x: sx / w, y: sy / w, pixels });
  }
  return out;
}

type Pixel = { x: number; y: number };

async function renderCheck(tiltDeg: number): Promise<{ found: Blob[]; visible: Pixel[]; projected: Pixel[] }> {
  const camera = sceneCamera(tiltDeg);
  const dir = path.join(work, `tilt-${tiltDeg}`);
  const markers = [...above, ...underWater].map(([x, y, z]) => tablePoint(x, y, z));
  writeFileSync(
    path.join(work, "check-variant.inc"),
    [
      `#declare CamLoc = ${vector(camera.location)};`,
      `#declare CamDir = ${vector(camera.direction)};`,
      `#declare CamRight = ${vector(camera.right)};`,
      `#declare CamUp = ${vector(camera.up)};`,
      `#declare MarkerRadius = ${markerRadiusCm};`,
      `#declare MarkerCount = ${markers.length};`,
      `#declare Markers = array[${markers.length}] { ${markers.map(vector).join(", ")} };`,
      `#declare TurnedMarker = ${vector(tablePoint(...turned.at))};`,
      `#declare TurnedDeg = ${turned.deg};`,
      `#declare WaterTop = ${waterLevelCm};`,
      "",
    ].join("\n"),
  );
  const out = `${dir}.png`;
  const run = spawnSync(
    "povray",
    [
      `+I${path.join(scenesDir, "check.pov")}`,
      `+L${work}`,
      `+L${scenesDir}`,
      `+W${sceneImage.width}`,
      `+H${sceneImage.height}`,
      "-A",
      "+FN8",
      `+O${out}`,
      "-D",
      "-V",
      "-GS",
      "-GR",
      "+WT1",
    ],
    { encoding: "utf8" },
  );
  if (run.status !== 0) throw new Error(`POV-Ray failed: ${run.error?.message ?? run.stderr}`);
  const { data, info } = await sharp(out).greyscale().raw().toBuffer({ resolveWithObject: true });
  const turnedPlan = turnPlan({ x: turned.at[0], y: turned.at[1] }, (turned.deg * Math.PI) / 180);
  const centres = [...markers, tablePoint(turnedPlan.x, turnedPlan.y, turned.at[2])];
  return {
    found: blobs(data, info.width, info.height),
    visible: centres.map((c) => visibleDiscCentre(camera, c, markerRadiusCm)),
    projected: centres.map((c) => projectUnderWater(camera, c)),
  };
}

const nearest = (found: Blob[], e: Pixel): Blob => found.reduce((a, b) => (Math.hypot(b.x - e.x, b.y - e.y) < Math.hypot(a.x - e.x, a.y - e.y) ? b : a));

describe("the ray-traced scenes' projection (POV-Ray 3.7 renders against scene-truth.ts)", () => {
  for (const tiltDeg of [0, 6]) {
    it(`puts every disc's rendered centroid within 0.01 px of the model's, and within 0.2 px of its projected centre, camera tilted ${tiltDeg}°`, async () => {
      const { found, visible, projected } = await renderCheck(tiltDeg);
      expect(found).toHaveLength(visible.length);
      const toVisible: number[] = [];
      const toProjected: number[] = [];
      visible.forEach((e, i) => {
        const blob = nearest(found, e);
        // A disc of 0.6 cm is 7 px in radius: enough pixels that a miscount would show.
        expect(blob.pixels).toBeGreaterThan(80);
        toVisible.push(Math.hypot(blob.x - e.x, blob.y - e.y));
        const p = projected[i] ?? e;
        toProjected.push(Math.hypot(blob.x - p.x, blob.y - p.y));
      });
      console.log(
        `tilt ${tiltDeg}°: rendered − pixel model ${toVisible.map((e) => e.toFixed(4)).join(", ")} px; rendered − projected centre ${toProjected.map((e) => e.toFixed(3)).join(", ")} px`,
      );
      for (const e of toVisible) expect(e).toBeLessThan(0.01);
      for (const e of toProjected) expect(e).toBeLessThan(0.2);
    });
  }

  it("tells a projection half a pixel off apart (the pixel-centre convention matters at this tolerance)", async () => {
    const { found, visible } = await renderCheck(0);
    const worst = Math.max(
      ...visible.map((e) => ({ x: e.x + 0.5, y: e.y + 0.5 })).map((e) => Math.hypot(nearest(found, e).x - e.x, nearest(found, e).y - e.y)),
    );
    expect(worst).toBeGreaterThan(0.5);
  });
});

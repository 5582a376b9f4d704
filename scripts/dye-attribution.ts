/**
 * `TANKSIDE_SCENE_ATTRIB=/scratch npx tsx scripts/dye-attribution.ts [condition …] [--frames] [--variant name] [--linear-dye]`:
 * what each of the lab-fixed dye scene's conditions costs the dye track. The scene
 * (tests/fixtures/scenes, variant lab-dye) is rendered again with ONE condition taken away, into a
 * scratch folder of its own (default /tmp/tankside-scene-attrib), never into the scene cache: the
 * committed scene files are copied there and the copy edited (each edit must match the committed
 * text exactly once, or the script stops), so the real stacks' files and cache keys stay as they
 * are. Renders run one at a time, niced, as two POV-Ray processes of one thread over halves of
 * the frames, as the scene cache renders them. Each stack is then tracked as the scene test tracks
 * it (measure-scene.ts) and the error split as scripts/dye-error-split.ts splits it; one JSON line
 * per condition (with `--frames`, one a frame as well). A condition already rendered is reused.
 *
 * Conditions (none named: all):
 *   scene                  the scene files as committed (checks that this path gives the cached stack's frames)
 *   no-glare               the water's surfaces without their highlight (specular 0): no lamp's glare
 *   no-copies              the dye casts no shadow: no coloured copies of the patch on the bottom
 *   second-lamp-shadowless the second (point) lamp casts no shadow; POV-Ray then gives it no highlight
 *                          either, so its near copy and its glare go together
 *   no-grid                the bottom plain, its light grey, without the polar grid
 *   grey-lines             the grid's lines grey (0.13 in every channel) instead of a little blue
 *   no-refraction          water and dye with n = 1: the dye seen straight (its truth then projected straight)
 *   png                    the `scene` render with noise but no JPEG (lossless PNG)
 *   jpeg-444               the `scene` render with noise and JPEG at quality 85 without halving the colour
 *   clean                  the `scene` render with neither noise nor JPEG
 *   glare-only             no copies, no grid: of the render's conditions only the glare (noise and JPEG kept)
 *   copies-only            no glare, no grid: only the lamps' coloured copies
 *   grid-only              no glare, no copies: only the grid
 *   bare                   no glare, no copies, no grid, neither noise nor JPEG
 *   bare-jpeg              the `bare` render with noise and JPEG
 *   bare-png               the `bare` render with noise, no JPEG
 *   bare-jpeg-444          the `bare` render with noise and JPEG without halving the colour
 *   water-face-over-bottom the scenes as rendered before Decision 99: the water's body starting 10 µm over
 *                          the bottom, whose face there mirrors the second lamp a second time
 *   linear-output          the image written in linear light (File_Gamma=1.0) instead of POV-Ray's sRGB
 *                          encoding, so that glare adds to a pixel's value as it adds light
 */
import { existsSync, readFileSync } from "node:fs";
import { mkdir, readdir, rm, writeFile } from "node:fs/promises";
import path from "node:path";
import type { PostProcessSteps } from "../tests/fixtures/scenes/render-scene-stack";
import { frameName, postProcessFrame, povrayArgs, rawFrameName, runPovray, scenesDir } from "../tests/fixtures/scenes/render-scene-stack";
import { measureSceneTrack, trackingOptionsFrom } from "../tests/fixtures/scenes/measure-scene";
import { sceneFrames, variantInclude, variantsNamed } from "../tests/fixtures/scenes/scene-model";
import type { SceneTruth } from "../tests/fixtures/scenes/scene-truth";
import { projectPoint, sceneTruth, tracerPoint } from "../tests/fixtures/scenes/scene-truth";
import { frameErrors, frameLine, summarise } from "./dye-error-split";
import { runTrackingScript } from "./run-tracking-script";

const sceneFiles = ["tank.pov", "tank-parts.inc", "room.inc"] as const;
type SceneFile = (typeof sceneFiles)[number];
interface Edit {
  file: SceneFile;
  from: string;
  to: string;
  /** how many times `from` must occur */
  count?: number;
}

const edits = {
  noGlare: [{ file: "tank-parts.inc", from: "finish { specular 0.9 roughness 0.0015 }", to: "finish { specular 0 }" }],
  // The dye casts no shadow: neither lamp's coloured copy; the lamps' light and the second lamp's glare stay.
  noCopies: [{ file: "tank-parts.inc", from: "  hollow\n  pigment { rgbt 1 }", to: "  hollow\n  no_shadow\n  pigment { rgbt 1 }" }],
  // POV-Ray gives a shadowless light no highlight: this takes the second lamp's glare away with its copy.
  secondLampShadowless: [{ file: "room.inc", from: "    color rgb 0.35\n  }", to: "    color rgb 0.35\n    shadowless\n  }" }],
  noGrid: [
    {
      file: "tank-parts.inc",
      from: "function { min(1, min(RingDistance(x, z), SpokeDistance(x, z)) / 0.15) }",
      to: "function { 1 }",
    },
  ],
  greyLines: [{ file: "tank-parts.inc", from: "[0 rgb <0.12, 0.13, 0.15>] [0.45 rgb <0.12, 0.13, 0.15>]", to: "[0 rgb 0.13] [0.45 rgb 0.13]" }],
  noRefraction: [{ file: "tank-parts.inc", from: "ior 1.33", to: "ior 1.0", count: 2 }],
  // The scenes as rendered before Decision 99: the water's body starting 10 µm over the bottom, whose
  // face there mirrors the second lamp a second time.
  waterFaceOverBottom: [{ file: "tank-parts.inc", from: "<0, -0.5, 0>, <0, WaterLevel, 0>", to: "<0, 0.001, 0>, <0, WaterLevel, 0>" }],
} satisfies Record<string, Edit[]>;

interface Condition {
  name: string;
  /** the render it is made from (its own name when it renders) */
  render: string;
  edits: Edit[];
  steps: PostProcessSteps;
  /** the dye seen straight: the truth projected without refraction */
  straight?: boolean;
  /** POV-Ray options added to the render's */
  options?: string[];
}

const full: PostProcessSteps = { noise: true, output: "jpeg" };
const conditions: Condition[] = [
  { name: "scene", render: "scene", edits: [], steps: full },
  { name: "no-glare", render: "no-glare", edits: edits.noGlare, steps: full },
  { name: "no-copies", render: "no-copies", edits: edits.noCopies, steps: full },
  { name: "second-lamp-shadowless", render: "second-lamp-shadowless", edits: edits.secondLampShadowless, steps: full },
  { name: "no-grid", render: "no-grid", edits: edits.noGrid, steps: full },
  { name: "grey-lines", render: "grey-lines", edits: edits.greyLines, steps: full },
  { name: "no-refraction", render: "no-refraction", edits: edits.noRefraction, steps: full, straight: true },
  { name: "png", render: "scene", edits: [], steps: { noise: true, output: "png" } },
  { name: "jpeg-444", render: "scene", edits: [], steps: { noise: true, output: "jpeg-444" } },
  { name: "clean", render: "scene", edits: [], steps: { noise: false, output: "png" } },
  { name: "glare-only", render: "glare-only", edits: [...edits.noCopies, ...edits.noGrid], steps: full },
  { name: "copies-only", render: "copies-only", edits: [...edits.noGlare, ...edits.noGrid], steps: full },
  { name: "grid-only", render: "grid-only", edits: [...edits.noGlare, ...edits.noCopies], steps: full },
  { name: "bare", render: "bare", edits: [...edits.noGlare, ...edits.noCopies, ...edits.noGrid], steps: { noise: false, output: "png" } },
  { name: "bare-jpeg", render: "bare", edits: [...edits.noGlare, ...edits.noCopies, ...edits.noGrid], steps: full },
  { name: "bare-png", render: "bare", edits: [...edits.noGlare, ...edits.noCopies, ...edits.noGrid], steps: { noise: true, output: "png" } },
  {
    name: "bare-jpeg-444",
    render: "bare",
    edits: [...edits.noGlare, ...edits.noCopies, ...edits.noGrid],
    steps: { noise: true, output: "jpeg-444" },
  },
  { name: "water-face-over-bottom", render: "water-face-over-bottom", edits: edits.waterFaceOverBottom, steps: full },
  { name: "linear-output", render: "linear-output", edits: [], steps: full, options: ["File_Gamma=1.0"] },
];

const variantArg = process.argv.indexOf("--variant");
/** The scene variant rendered: lab-dye unless `--variant <name>` names another (its floats are tracked and measured, not split). */
const variantName = variantArg >= 0 ? process.argv[variantArg + 1]! : "lab-dye";
const attribRoot = process.env.TANKSIDE_SCENE_ATTRIB ?? "/tmp/tankside-scene-attrib";
const root = variantName === "lab-dye" ? attribRoot : path.join(attribRoot, variantName);

function edited(file: SceneFile, all: readonly Edit[]): string {
  let text = readFileSync(path.join(scenesDir, file), "utf8");
  for (const e of all.filter((x) => x.file === file)) {
    const found = text.split(e.from).length - 1;
    if (found !== (e.count ?? 1)) throw new Error(`${file}: "${e.from}" found ${found} times, not ${e.count ?? 1}; the scene files have changed.`);
    text = text.split(e.from).join(e.to);
  }
  return text;
}

/** The render's raw PNGs (POV-Ray's), made once into root/<render>/raw. */
async function rawFrames(condition: Condition, total: number): Promise<string> {
  const dir = path.join(root, condition.render);
  const raw = path.join(dir, "raw");
  if (existsSync(path.join(dir, "rendered.json"))) return raw;
  await rm(dir, { recursive: true, force: true });
  await mkdir(raw, { recursive: true });
  const [variant] = variantsNamed([variantName]);
  await writeFile(path.join(dir, "variant.inc"), variantInclude(variant!, sceneFrames(variant!)));
  for (const file of sceneFiles) await writeFile(path.join(dir, file), edited(file, condition.edits));
  // Only the scratch folder on the library path: the edited copies, never the committed files.
  const args = (first: number, last: number) => [
    ...povrayArgs(path.join(dir, "tank.pov"), dir, first, last, total).filter((a) => a !== `+L${scenesDir}`),
    ...(condition.options ?? []),
  ];
  const started = performance.now();
  const half = Math.ceil(total / 2);
  await Promise.all([runPovray(args(1, half), dir, 19), runPovray(args(half + 1, total), dir, 19)]);
  const seconds = (performance.now() - started) / 1000;
  await writeFile(
    path.join(dir, "rendered.json"),
    JSON.stringify({ condition: condition.render, seconds, edits: condition.edits, options: condition.options ?? [] }),
  );
  process.stderr.write(`${condition.render}: rendered in ${seconds.toFixed(0)} s\n`);
  return raw;
}

function truthFor(condition: Condition): SceneTruth {
  const [variant] = variantsNamed([variantName]);
  const truth = sceneTruth(variant!);
  if (!condition.straight) return truth;
  const states = sceneFrames(variant!);
  return {
    ...truth,
    tracerCentre: "the centre of the dye ellipsoid, 6 mm under the surface, projected straight (water and dye without refraction)",
    frames: truth.frames.map((f) => {
      const p = projectPoint(truth.camera, tracerPoint(variant!, states[f.index]!));
      return { ...f, x: p.x, y: p.y, projectedX: p.x, projectedY: p.y };
    }),
  };
}

async function measure(condition: Condition, withFrames: boolean): Promise<void> {
  const [variant] = variantsNamed([variantName]);
  const total = sceneFrames(variant!).length;
  const raw = await rawFrames(condition, total);
  const dir = path.join(root, condition.name === condition.render ? condition.render : `${condition.render}-${condition.name}`, "frames");
  const extension = condition.steps.output === "png" ? ".png" : ".jpg";
  const files = Array.from({ length: total }, (_, i) => path.join(dir, frameName(i).replace(/\.jpg$/, extension)));
  if (!existsSync(dir) || (await readdir(dir)).length < total) {
    await mkdir(dir, { recursive: true });
    for (let i = 0; i < total; i++) {
      await postProcessFrame(path.join(raw, rawFrameName(i + 1, total)), files[i]!, variant!.seed * 100_000 + i, condition.steps);
    }
  }
  const truth = truthFor(condition);
  const { measurement, longest } = await measureSceneTrack({ dir, files, truth, renderSeconds: null }, trackingOptionsFrom(process.argv));
  const rows = longest && truth.tracer === "dye" ? frameErrors(variant!, truth, longest) : [];
  if (withFrames) for (const r of rows) process.stdout.write(`${JSON.stringify({ condition: condition.name, ...frameLine(r) })}\n`);
  process.stdout.write(
    `${JSON.stringify({
      condition: condition.name,
      longestTrackShare: measurement.longestTrackShare,
      tracks: measurement.tracks,
      rmsErrorPx: measurement.rmsErrorPx === null ? null : Number(measurement.rmsErrorPx.toFixed(3)),
      fErrorPercent: measurement.fErrorPercent === null ? null : Number(measurement.fErrorPercent.toFixed(3)),
      verdict: measurement.verdict,
      trackSeconds: Number(measurement.trackSeconds.toFixed(1)),
      ...(rows.length > 0 ? summarise(truth, rows) : {}),
    })}\n`,
  );
}

async function main(): Promise<void> {
  const named = process.argv.slice(2).filter((a, i, all) => !a.startsWith("-") && all[i - 1] !== "--variant");
  const unknown = named.filter((n) => !conditions.some((c) => c.name === n));
  if (unknown.length > 0) throw new Error(`No such condition: ${unknown.join(", ")} (there are ${conditions.map((c) => c.name).join(", ")}).`);
  const chosen = named.length > 0 ? conditions.filter((c) => named.includes(c.name)) : conditions;
  for (const condition of chosen) await measure(condition, process.argv.includes("--frames"));
}

runTrackingScript(main);

// npm run demo:frames -- <folder>: writes a rendered frame stack (the demo's first run: a float on a
// table turning 10 rpm counterclockwise, filmed from the table at 30 frames per second) for
// `npm run analyze`, and prints the command that analyses it.
import { mkdir, readdir, writeFile } from "node:fs/promises";
import path from "node:path";
import sharp from "sharp";
import { renderRunFrames } from "~/lib/tracking/synthetic";
import { demoCentre, demoStackSpec, FPS, PX_PER_M } from "../app/.server/seed/demo-stacks";

const dir = process.argv[2];
if (!dir || dir.startsWith("-")) {
  console.error("usage: npm run demo:frames -- <folder>   (writes 240 JPEG frames into the folder, which must be empty or new)");
  process.exit(2);
}
await mkdir(dir, { recursive: true });
if ((await readdir(dir)).length > 0) {
  console.error(`The folder "${dir}" is not empty: choose a new or empty one.`);
  process.exit(2);
}
const frames = 240;
const spec = demoStackSpec({ frames, seed: 1000, cameraMode: "rotating", rpm: 10, direction: "ccw", tracer: "float" });
await renderRunFrames(spec, async (frame) => {
  const jpeg = await sharp(Buffer.from(frame.data), { raw: { width: frame.width, height: frame.height, channels: frame.channels } })
    .jpeg({ quality: 90 })
    .toBuffer();
  await writeFile(path.join(dir, `frame_${String(frame.index + 1).padStart(3, "0")}.jpg`), jpeg);
});
const centre = `${Number(demoCentre.x.toFixed(1))},${Number(demoCentre.y.toFixed(1))}`;
console.error(`${frames} frames written to ${dir}. Analyse them with:`);
console.log(
  `npm run --silent analyze -- ${dir} --rpm 10 --direction ccw --fps ${FPS} --camera rotating --centre ${centre} --tracer float --px-per-cm ${PX_PER_M / 100}`,
);

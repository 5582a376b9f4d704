/**
 * The dye detector alone, in this process, on the dye bench's 600-frame stack (render it first with
 * `npm run bench -- --tracer dye`): the stack's background as the lib makes it (dyeBackground), then
 * every frame searched as a tracking job searches it (windows from the frames `lag` before, every
 * 8th frame whole), `--reps` times over. Prints, as one JSON line, the best pass's processor time of
 * this thread a frame (from /proc, 10 ms ticks over the pass) and its wall time a frame, and a
 * digest of every frame's detections: a change meant to be faster only must leave it as it was.
 * `--save <file>` keeps the detections; `--compare <file>` says how far from those saved each find
 * now lies (the largest shift of a centre, px, and of an area), for a change that reorders the
 * arithmetic and so moves centres in their last digits, which the digest cannot tell from a real move.
 * `--linear-dye` reads each patch's centre in linear light (Decision 102).
 * No worker, no decoding in the timed passes: a guide to the detector's own cost, which the bench's
 * worker thread shows beside decoding and the hand-over.
 */
import { createHash } from "node:crypto";
import { existsSync, readdirSync, readFileSync, writeFileSync } from "node:fs";
import { createRequire } from "node:module";
import path from "node:path";
import { decodeFrame } from "../app/.server/tracking/decode-frame";
import { backgroundSampleIndices, dyeBackground } from "../app/lib/tracking/background";
import { createDetector } from "../app/lib/tracking/detect";
import type { OpenCv } from "../app/lib/tracking/opencv-types";
import { planDetection } from "../app/lib/tracking/plan";
import { lastWholeFrame, searchedWhole, searchWindows } from "../app/lib/tracking/search-windows";
import type { Detection } from "../app/lib/tracking/types";
import { benchSetup, benchStackDir } from "./bench-stacks";

const repsArg = process.argv.indexOf("--reps");
const reps = repsArg >= 0 ? Number(process.argv[repsArg + 1]) : 3;
const argAfter = (flag: string) => {
  const at = process.argv.indexOf(flag);
  return at >= 0 ? process.argv[at + 1] : undefined;
};
const saveTo = argAfter("--save");
const compareWith = argAfter("--compare");
/** As track-frame-stack.ts on 2 cores: the windows of frame i come from frame i − 6 and the two before it. */
const lag = 6;

const stackDir = benchStackDir("dye");
if (!existsSync(path.join(stackDir, "complete.json"))) throw new Error(`No dye bench stack in ${stackDir}: run \`npm run bench -- --tracer dye\` first.`);
const files = readdirSync(stackDir)
  .filter((n) => n.endsWith(".jpg"))
  .sort()
  .map((n) => path.join(stackDir, n));
const setup = { ...benchSetup("dye"), ...(process.argv.includes("--linear-dye") ? { dyeLight: "linear" as const } : {}) };
const plan = planDetection(setup, 1280, 720);
const { width, height } = plan.crop;
const { cv } = createRequire(import.meta.url)("opencv-wasm") as { cv: OpenCv };
const detector = createDetector(cv, plan);
const image = (data: Uint8Array) => ({ data, width, height, channels: 3 });

/** This thread's processor time, ms (10 ms ticks). */
function threadMs(): number {
  const fields = readFileSync(`/proc/self/task/${process.pid}/stat`, "utf8").split(") ")[1]!.split(" ");
  return (Number(fields[11]) + Number(fields[12])) * 10;
}

async function main(): Promise<void> {
  const samples: Uint8Array[] = [];
  for (const i of backgroundSampleIndices(files.length)) samples.push(await decodeFrame(files[i]!, i, plan));
  const background = dyeBackground(samples, width, (frame, bg) => detector.detect(image(frame), bg), plan.crop, plan.shrink);
  const frames: Uint8Array[] = [];
  for (let i = 0; i < files.length; i++) frames.push(await decodeFrame(files[i]!, i, plan));
  const step = Math.max(10, 0.1 * (plan.tank?.r ?? Math.min(width, height) / 2));
  const found: Detection[][] = [];
  let bestCpu = Infinity;
  let bestWall = Infinity;
  for (let rep = 0; rep < reps; rep++) {
    found.length = 0;
    const at = (j: number) => (j < 0 ? null : (found[j] ?? null));
    const cpu0 = threadMs();
    const wall0 = performance.now();
    for (let i = 0; i < frames.length; i++) {
      const first = i - lag;
      const windows = searchedWhole(i)
        ? null
        : searchWindows({ recent: [at(first), at(first - 1), at(first - 2)], lastWhole: at(lastWholeFrame(first)), lag, maxStepPx: step });
      found[i] = detector.detect(image(frames[i]!), background, windows ?? undefined);
    }
    bestWall = Math.min(bestWall, performance.now() - wall0);
    bestCpu = Math.min(bestCpu, threadMs() - cpu0);
  }
  detector.dispose();
  const digest = createHash("sha256").update(JSON.stringify(found)).digest("hex").slice(0, 16);
  if (saveTo) writeFileSync(saveTo, JSON.stringify(found));
  const compared = compareWith ? compare(JSON.parse(readFileSync(compareWith, "utf8")) as Detection[][], found) : undefined;
  const load = readFileSync("/proc/loadavg", "utf8").split(" ")[0];
  process.stdout.write(
    `${JSON.stringify({
      frames: frames.length,
      reps,
      cpuMsPerFrame: +(bestCpu / frames.length).toFixed(2),
      wallMsPerFrame: +(bestWall / frames.length).toFixed(2),
      framesWithFinds: found.filter((f) => f.length > 0).length,
      detectionsDigest: digest,
      ...(compared ? { compared } : {}),
      loadAverage: Number(load),
    })}\n`,
  );
}

/** Frame by frame, the same number of finds, and how far the farthest moved. */
function compare(before: Detection[][], now: Detection[][]) {
  let sameCounts = before.length === now.length;
  let maxShiftPx = 0;
  let maxAreaChange = 0;
  for (let i = 0; i < Math.min(before.length, now.length); i++) {
    const a = before[i]!;
    const b = now[i]!;
    if (a.length !== b.length) {
      sameCounts = false;
      continue;
    }
    for (let j = 0; j < a.length; j++) {
      maxShiftPx = Math.max(maxShiftPx, Math.hypot(a[j]!.x - b[j]!.x, a[j]!.y - b[j]!.y));
      maxAreaChange = Math.max(maxAreaChange, Math.abs(a[j]!.area - b[j]!.area));
    }
  }
  return { sameCounts, maxShiftPx, maxAreaChange };
}

await main();

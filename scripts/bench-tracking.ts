/**
 * Tracking speed and memory on a 600-frame 1280×720 JPEG stack (bench-stacks.ts): by default a
 * float on an inertial circle; with `--tracer dye` an elongated low-contrast dye patch carried
 * round by the table under a lab-fixed camera. The stack is rendered once into
 * node_modules/.cache (a separate process, so its memory does not count) and reused. Prints
 * details on stderr and, as the last line of stdout, one JSON object: frames, width, height,
 * framesPerSecond, decodeOnlyFramesPerSecond, peakRssMB, and (added later) tracer, cpuMsPerFrame,
 * rmsErrorPx (the longest track against the rendered truth), ratioToDecode (framesPerSecond over
 * decodeOnlyFramesPerSecond, both of this run), warmPool, decodeCpuMsPerFrame and cpuRatioToDecode
 * (decoding's processor time a frame over tracking's), and serverNodeFlags (whether this process
 * runs with the V8 option a server starts with, scripts/node-flags.mjs, as `npm run bench` does)
 * and passes.
 *
 * The pool (`--pool`, the JSON line's `pool`): `ready` (the default) readies it before any timed
 * pass as a server does when it starts taking tracking jobs (readyTrackingPool: the thread it keeps
 * for its life started, OpenCV loaded, the detector practised), so the pass is a job on a running
 * server; `started` starts the threads just before the tracking pass without practice (also
 * `--warm-pool`), as for a job right after a server's start; `cold` leaves the tracking pass to
 * start them, as a job does whose server's thread died, or that lost the race with the readying
 * at start (one thread fewer than the cores, each loading OpenCV). `warmPool` says whether the
 * threads were started before the pass. The decode-only pass is the decoder's own work on the same
 * frames and crop (decodeFrame as a job calls it), run before the tracking pass in the same process.
 *
 * `--passes N` decodes and tracks the stack N times in this process, the pool kept between passes
 * as a server keeps it for a minute after a job, and the JSON line gives the last pass: a server
 * that has tracked before, whose compiled code has settled (stderr gives every pass).
 *
 * `--threads` also prints, on stderr, each pass's processor time by kind of thread
 * (scripts/thread-times.ts): where the time beyond decoding goes, and the main thread's garbage
 * collections in each pass (scripts/gc-counts.ts). `--each-thread` prints every thread's time too.
 */
import { spawnSync } from "node:child_process";
import { existsSync, readFileSync } from "node:fs";
import { mkdir, readdir, rm, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { decodeFrame } from "../app/.server/tracking/decode-frame";
import { trackFrameStack } from "../app/.server/tracking/track-frame-stack";
import { closeTrackingPool, readyTrackingPool, trackingThreads, warmTrackingPool } from "../app/.server/tracking/tracking-pool";
import { planDetection } from "../app/lib/tracking/plan";
import type { Track } from "../app/lib/tracking/types";
import { writeSyntheticStack } from "../tests/fixtures/tracking/write-stack";
import { benchSetup, benchSpec, benchStackDir, root, type BenchTracer } from "./bench-stacks";
import { collectionCounter } from "./gc-counts";
import { serverNodeFlags } from "./node-flags.mjs";
import { eachThread, threadSnapshot, threadTimes } from "./thread-times";

const tracerArg = process.argv.indexOf("--tracer");
const tracerName = tracerArg >= 0 ? process.argv[tracerArg + 1] : "float";
if (tracerName !== "float" && tracerName !== "dye") throw new Error(`--tracer is float or dye, not ${String(tracerName)}.`);
const tracer: BenchTracer = tracerName;
const poolArg = process.argv.indexOf("--pool");
const poolName = process.argv.includes("--warm-pool") ? "started" : poolArg >= 0 ? process.argv[poolArg + 1] : "ready";
if (poolName !== "ready" && poolName !== "started" && poolName !== "cold") throw new Error(`--pool is ready, started or cold, not ${String(poolName)}.`);
const poolCondition: "ready" | "started" | "cold" = poolName;
const warmPool = poolCondition !== "cold";
const everyThread = process.argv.includes("--each-thread");
const byThread = everyThread || process.argv.includes("--threads");
const passesArg = process.argv.indexOf("--passes");
const passes = passesArg >= 0 ? Number(process.argv[passesArg + 1]) : 1;
if (!(Number.isInteger(passes) && passes >= 1 && passes <= 20)) throw new Error("--passes is a whole number from 1 to 20.");
const spec = benchSpec(tracer);
const setup = benchSetup(tracer);
const cacheDir = benchStackDir(tracer);
const doneMarker = path.join(cacheDir, "complete.json");

function log(message: string): void {
  process.stderr.write(`${message}\n`);
}

async function render(): Promise<void> {
  // Stacks of an older renderer or spec are of no further use.
  const parent = path.dirname(cacheDir);
  if (existsSync(parent)) {
    for (const name of await readdir(parent)) {
      if (name.startsWith(`${tracer}-`) || !/^(float|dye)-/.test(name)) await rm(path.join(parent, name), { recursive: true, force: true });
    }
  }
  await mkdir(cacheDir, { recursive: true });
  const stack = await writeSyntheticStack(cacheDir, spec, { format: "jpeg", quality: 90 });
  await writeFile(doneMarker, JSON.stringify({ frames: spec.frames, truth: stack.truth.map((t) => t[0]) }));
}

async function frameFiles(): Promise<string[]> {
  if (!existsSync(doneMarker)) {
    log(`rendering ${spec.frames} frames into ${path.relative(root, cacheDir)} (once) …`);
    const started = performance.now();
    const child = spawnSync(process.execPath, [...process.execArgv, fileURLToPath(import.meta.url), "--render", "--tracer", tracer], {
      stdio: ["ignore", "inherit", "inherit"],
    });
    if (child.status !== 0) throw new Error("Rendering the benchmark stack failed.");
    log(`rendered in ${((performance.now() - started) / 1000).toFixed(1)} s`);
  }
  const names = (await readdir(cacheDir)).filter((n) => n.endsWith(".jpg")).sort();
  return names.map((n) => path.join(cacheDir, n));
}

/** Samples the process's resident memory, which includes every worker thread. */
function rssSampler(): { stop(): number } {
  let peak = process.memoryUsage.rss();
  const timer = setInterval(() => {
    peak = Math.max(peak, process.memoryUsage.rss());
  }, 50);
  return {
    stop() {
      clearInterval(timer);
      return Math.max(peak, process.memoryUsage.rss());
    },
  };
}

async function decodeOnly(files: string[]): Promise<number> {
  const plan = planDetection(setup, spec.width, spec.height);
  const window = os.availableParallelism() * 3;
  const started = performance.now();
  let next = 0;
  await Promise.all(
    Array.from({ length: window }, async () => {
      while (next < files.length) {
        const i = next++;
        await decodeFrame(files[i]!, i, plan);
      }
    }),
  );
  return files.length / ((performance.now() - started) / 1000);
}

/**
 * One decode-only pass and one tracking pass. Later passes (`--passes N`) track the same stack
 * again in this process, with the pool kept (as a server keeps its thread): what a
 * server that has tracked before spends, once its compiled code has settled.
 */
async function onePass(files: string[], times: number[], pass: number, collections: ReturnType<typeof collectionCounter> | null) {
  const existing = threadSnapshot();
  const decodeCpuBefore = process.cpuUsage();
  const decodeFps = await decodeOnly(files);
  const decodeCpu = process.cpuUsage(decodeCpuBefore);
  const afterDecode = threadSnapshot();
  if (byThread) {
    log(`decode only, ms of processor time by thread: ${JSON.stringify(threadTimes(existing, afterDecode, existing))}`);
    if (everyThread) log(`decode only, each thread: ${JSON.stringify(eachThread(existing, afterDecode))}`);
    log(`decode only, the main thread's collections: ${JSON.stringify(collections?.take())}`);
  }
  const decodeCpuMsPerFrame = (decodeCpu.user + decodeCpu.system) / 1000 / files.length;
  const label = passes > 1 ? `pass ${pass}, ` : "";
  log(`${label}decode only: ${decodeFps.toFixed(1)} frames/s, ${decodeCpuMsPerFrame.toFixed(1)} ms CPU a frame`);

  if (poolCondition === "started" && pass === 1) await warmTrackingPool();
  // Collections while the pool started ahead are not the tracking pass's.
  collections?.take();
  const beforeTracking = threadSnapshot();
  const started = performance.now();
  const cpuBefore = process.cpuUsage();
  const result = await trackFrameStack({ files, times, setup });
  const seconds = (performance.now() - started) / 1000;
  // CPU time of the whole process, workers included: a figure that other load on the machine
  // does not change, unlike frames per second.
  const cpu = process.cpuUsage(cpuBefore);
  const cpuMsPerFrame = (cpu.user + cpu.system) / 1000 / files.length;
  const fps = files.length / seconds;
  if (byThread) {
    const afterTracking = threadSnapshot();
    log(`tracking, ms of processor time by thread: ${JSON.stringify(threadTimes(beforeTracking, afterTracking, afterDecode))}`);
    if (everyThread) log(`tracking, each thread: ${JSON.stringify(eachThread(beforeTracking, afterTracking))}`);
    log(`tracking, the main thread's collections: ${JSON.stringify(collections?.take())}`);
  }
  if (passes > 1)
    log(
      `${label}tracking: ${fps.toFixed(1)} frames/s, ${cpuMsPerFrame.toFixed(1)} ms CPU a frame, cpuRatioToDecode ${(decodeCpuMsPerFrame / cpuMsPerFrame).toFixed(2)}`,
    );
  return { decodeFps, decodeCpuMsPerFrame, fps, seconds, cpuMsPerFrame, result };
}

async function main(): Promise<void> {
  if (process.argv.includes("--render")) {
    await render();
    return;
  }
  const files = await frameFiles();
  const asServer = serverNodeFlags.every((flag) => process.execArgv.includes(flag));
  if (!asServer) log(`not started with ${serverNodeFlags.join(" ")} as a server is (npm run bench is): decoding collects garbage more often`);
  const times = files.map((_, i) => i / spec.fps);
  const sampler = rssSampler();

  if (poolCondition === "ready") {
    const readying = process.cpuUsage();
    const practice = await readyTrackingPool();
    const spent = process.cpuUsage(readying);
    log(
      `pool readied as a server starting does: ${((spent.user + spent.system) / 1000).toFixed(0)} ms of processor time, the tracer found in ${practice.found} of ${practice.searched} practice frames`,
    );
  }
  const collections = byThread ? collectionCounter() : null;
  let last: Awaited<ReturnType<typeof onePass>> | null = null;
  for (let pass = 1; pass <= passes; pass++) {
    last = await onePass(files, times, pass, collections);
  }
  collections?.stop();
  const { decodeFps, decodeCpuMsPerFrame, fps, seconds, cpuMsPerFrame, result } = last!;
  await closeTrackingPool();
  const sampledPeak = sampler.stop();
  // The kernel's high-water mark for the whole process, threads included; no render happened here.
  const kernelPeak = process.resourceUsage().maxRSS * 1024;
  const peakRssMB = Math.max(sampledPeak, kernelPeak) / (1024 * 1024);

  const longest = result.tracks.reduce((a: Track, b: Track) => (b.points.length > a.points.length ? b : a));
  const truth = (JSON.parse(readFileSync(doneMarker, "utf8")) as { truth?: { x: number; y: number }[] }).truth ?? [];
  let squares = 0;
  let counted = 0;
  for (const p of longest.points) {
    const at = truth[p.frameIndex];
    if (!at) continue;
    squares += (p.x - at.x) ** 2 + (p.y - at.y) ** 2;
    counted++;
  }
  const rmsErrorPx = counted > 0 ? Math.sqrt(squares / counted) : null;
  log(
    `${passes > 1 ? `pass ${passes}, ` : ""}tracking: ${fps.toFixed(1)} frames/s (${seconds.toFixed(2)} s, ${trackingThreads} worker(s) ${passes > 1 ? "kept from the pass before" : { ready: "readied as at a server's start", started: "already started", cold: "started in the pass" }[poolCondition]}, block ${result.search.shrink} px), ` +
      `${cpuMsPerFrame.toFixed(1)} ms CPU a frame, load average ${os.loadavg()[0]!.toFixed(1)}, ` +
      `${result.tracks.length} track(s), longest ${longest.points.length} points, ` +
      `frames detected ${(result.quality.framesDetectedShare * 100).toFixed(1)} %, jitter ${result.quality.jitterPx?.toFixed(3)} px, ` +
      `RMS error ${rmsErrorPx?.toFixed(3)} px`,
  );
  process.stdout.write(
    `${JSON.stringify({
      frames: result.frames,
      width: result.width,
      height: result.height,
      framesPerSecond: Number(fps.toFixed(1)),
      decodeOnlyFramesPerSecond: Number(decodeFps.toFixed(1)),
      peakRssMB: Number(peakRssMB.toFixed(1)),
      tracer,
      cpuMsPerFrame: Number(cpuMsPerFrame.toFixed(1)),
      rmsErrorPx: rmsErrorPx === null ? null : Number(rmsErrorPx.toFixed(3)),
      ratioToDecode: Number((fps / decodeFps).toFixed(2)),
      warmPool,
      pool: poolCondition,
      // Processor time a frame of decoding alone over that of tracking: roughly what the ratio
      // above comes to on an idle machine whose cores decoding keeps busy, and far steadier than
      // it on a machine other work shares.
      decodeCpuMsPerFrame: Number(decodeCpuMsPerFrame.toFixed(1)),
      cpuRatioToDecode: Number((decodeCpuMsPerFrame / cpuMsPerFrame).toFixed(2)),
      serverNodeFlags: asServer,
      passes,
    })}\n`,
  );
}

main().catch(async (error: unknown) => {
  log(error instanceof Error ? (error.stack ?? error.message) : String(error));
  await closeTrackingPool();
  process.exit(1);
});

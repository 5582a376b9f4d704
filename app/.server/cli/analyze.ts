/**
 * The command-line door to the tracking job: the same trackFrameStack the server's worker pool
 * runs, on a folder of frames. Exactly one JSON document goes to stdout; progress and messages go
 * to stderr. Exit codes: 0 done, 1 the frames could not be tracked, 2 wrong arguments, 130
 * interrupted.
 */
import { readdir, stat } from "node:fs/promises";
import path from "node:path";
import { parseArgs } from "node:util";
import { compare } from "natural-orderby";
import { runTheoryCheck } from "../../lib/analysis/check";
import type { Track, TrackingSetup } from "../../lib/tracking/types";
import { TrackingError } from "../tracking/errors";
import { closeTrackingPool, trackFrameStack, type TrackFrameStackResult } from "../tracking/track-frame-stack";

const usage = `Usage: npm run --silent analyze -- <frames-dir> --rpm <n> --direction ccw|cw --fps <n>
         --camera rotating|lab --centre <col>,<row> --tracer float|dye
         [--px-per-cm <s>] [--tank-edge <cx>,<cy>,<r>] [--mirrored]

  <frames-dir>   folder of frames (jpg, jpeg, png, tif, tiff, webp), taken in natural name order
  --rpm          set rate of the table, revolutions per minute
  --direction    ccw (counterclockwise seen from above) or cw
  --fps          frame rate; frame i is at i / fps seconds
  --camera       rotating (rides on the table) or lab (fixed in the room)
  --centre       rotation centre in image pixels
  --tracer       float or dye
  --px-per-cm    scale, pixels per centimetre (without it lengths stay in pixels)
  --tank-edge    circle searched, image pixels (default: the whole frame)
  --mirrored     the image is mirrored (camera below the table, or a mirror)`;

const frameExtensions = new Set([".jpg", ".jpeg", ".png", ".tif", ".tiff", ".webp"]);

class UsageError extends Error {}

interface AnalyzeArguments {
  framesDir: string;
  rpm: number;
  direction: "ccw" | "cw";
  fps: number;
  camera: "rotating" | "lab";
  centre: { x: number; y: number };
  tracer: "float" | "dye";
  pxPerCm: number | null;
  tankEdge: { cx: number; cy: number; r: number } | null;
  mirrored: boolean;
}

function numberList(name: string, value: string, count: number): number[] {
  const texts = value.split(",").map((p) => p.trim());
  const parts = texts.map(Number);
  if (parts.length !== count || texts.some((p) => p === "") || parts.some((p) => !Number.isFinite(p))) {
    throw new UsageError(`--${name} needs ${count} numbers separated by commas, not "${value}".`);
  }
  return parts;
}

function positive(name: string, value: string | undefined, allowZero = false): number {
  if (value === undefined) throw new UsageError(`--${name} is required.`);
  const n = Number(value);
  if (value.trim() === "" || !Number.isFinite(n) || n < 0 || (!allowZero && n === 0)) {
    throw new UsageError(`--${name} must be a number ${allowZero ? "of zero or more" : "above zero"}, not "${value}".`);
  }
  return n;
}

function oneOf<T extends string>(name: string, value: string | undefined, allowed: readonly T[]): T {
  if (value === undefined) throw new UsageError(`--${name} is required.`);
  if (!(allowed as readonly string[]).includes(value)) {
    throw new UsageError(`--${name} must be ${allowed.join(" or ")}, not "${value}".`);
  }
  return value as T;
}

function parseAnalyzeArguments(argv: string[]): AnalyzeArguments | "help" {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      strict: true,
      options: {
        rpm: { type: "string" },
        direction: { type: "string" },
        fps: { type: "string" },
        camera: { type: "string" },
        centre: { type: "string" },
        tracer: { type: "string" },
        "px-per-cm": { type: "string" },
        "tank-edge": { type: "string" },
        mirrored: { type: "boolean" },
        help: { type: "boolean", short: "h" },
      },
    });
  } catch (error) {
    throw new UsageError(error instanceof Error ? error.message : String(error));
  }
  const { values, positionals } = parsed;
  if (values.help) return "help";
  if (positionals.length !== 1) throw new UsageError("Give exactly one folder of frames.");
  if (values.centre === undefined) throw new UsageError("--centre is required.");
  const [x, y] = numberList("centre", values.centre, 2);
  const edge = values["tank-edge"] === undefined ? null : numberList("tank-edge", values["tank-edge"], 3);
  if (edge && !(edge[2] > 0)) throw new UsageError("--tank-edge needs a radius above zero.");
  return {
    framesDir: positionals[0],
    rpm: positive("rpm", values.rpm, true),
    direction: oneOf("direction", values.direction, ["ccw", "cw"] as const),
    fps: positive("fps", values.fps),
    camera: oneOf("camera", values.camera, ["rotating", "lab"] as const),
    centre: { x, y },
    tracer: oneOf("tracer", values.tracer, ["float", "dye"] as const),
    pxPerCm: values["px-per-cm"] === undefined ? null : positive("px-per-cm", values["px-per-cm"]),
    tankEdge: edge ? { cx: edge[0], cy: edge[1], r: edge[2] } : null,
    mirrored: values.mirrored ?? false,
  };
}

async function frameFiles(dir: string): Promise<string[]> {
  const info = await stat(dir).catch(() => null);
  if (!info?.isDirectory()) throw new UsageError(`The frames folder "${dir}" does not exist.`);
  const names = (await readdir(dir, { withFileTypes: true }))
    .filter((e) => e.isFile() && frameExtensions.has(path.extname(e.name).toLowerCase()))
    .map((e) => e.name)
    .sort(compare());
  return names.map((n) => path.join(dir, n));
}

/** Signed Ω, rad/s: counterclockwise seen from above is positive. */
function omegaSet(args: AnalyzeArguments): number {
  return ((args.direction === "ccw" ? 1 : -1) * 2 * Math.PI * args.rpm) / 60;
}

/** The theory check on the longest track: the one place where tracking output meets the physics. */
function theoryCheck(args: AnalyzeArguments, tracks: Track[]) {
  const longest = tracks.reduce((a, b) => (b.points.length > a.points.length ? b : a));
  const result = runTheoryCheck({
    points: longest.points.map(({ t, x, y }) => ({ t, x, y })),
    setup: { centre: args.centre, pxPerM: args.pxPerCm === null ? null : args.pxPerCm * 100, mirrored: args.mirrored },
    omegaSet: omegaSet(args),
    cameraMode: args.camera,
  });
  return {
    trackId: longest.id,
    omega: result.omega,
    fPredicted: result.fPredicted,
    fMeasured: result.fMeasured,
    fStdError: result.fStdError,
    drag: result.drag,
    deflection: result.deflection,
    verdict: result.verdict,
    reason: result.reason,
    circle: result.circle && {
      cx: result.circle.cx,
      cy: result.circle.cy,
      radiusPx: result.circle.radiusPx,
      radiusM: result.circle.radiusM,
      period: result.circle.period,
    },
  };
}

const round = (value: number, digits: number) => Number(value.toFixed(digits));

function outputDocument(args: AnalyzeArguments, setup: TrackingSetup, result: TrackFrameStackResult) {
  return {
    frames: result.frames,
    width: result.width,
    height: result.height,
    tracks: result.tracks.map((track) => ({
      id: track.id,
      points: track.points.map((p) => ({ t: round(p.t, 6), x: round(p.x, 3), y: round(p.y, 3) })),
    })),
    quality: result.quality,
    setup: { ...setup, pxPerM: args.pxPerCm === null ? null : args.pxPerCm * 100 },
    cameraMode: args.camera,
    omegaSet: omegaSet(args),
    check: theoryCheck(args, result.tracks),
  };
}

async function main(argv: string[]): Promise<number> {
  let args: AnalyzeArguments | "help";
  let files: string[];
  try {
    args = parseAnalyzeArguments(argv);
    if (args === "help") {
      process.stderr.write(`${usage}\n`);
      return 0;
    }
    files = await frameFiles(args.framesDir);
  } catch (error) {
    if (!(error instanceof UsageError)) throw error;
    process.stderr.write(`analyze: ${error.message}\n\n${usage}\n`);
    return 2;
  }

  const setup: TrackingSetup = {
    tracer: args.tracer,
    centre: args.centre,
    tankEdge: args.tankEdge,
    mirrored: args.mirrored,
  };
  const controller = new AbortController();
  const interrupt = () => controller.abort();
  process.once("SIGINT", interrupt);
  const fps = args.fps;
  try {
    process.stderr.write(`analyze: ${files.length} frames in ${args.framesDir}\n`);
    const result = await trackFrameStack({
      files,
      times: files.map((_, i) => i / fps),
      setup,
      signal: controller.signal,
      onProgress: (done, total) => process.stderr.write(`analyze: ${done}/${total} frames searched\n`),
    });
    process.stdout.write(`${JSON.stringify(outputDocument(args, setup, result))}\n`);
    process.stderr.write(`analyze: ${result.tracks.length} track(s)\n`);
    return 0;
  } catch (error) {
    if (error instanceof TrackingError) {
      process.stderr.write(`analyze: ${error.message}\n`);
      return error.code === "cancelled" ? 130 : 1;
    }
    throw error;
  } finally {
    process.off("SIGINT", interrupt);
    await closeTrackingPool();
  }
}

main(process.argv.slice(2)).then(
  (code) => {
    process.exitCode = code;
  },
  (error: unknown) => {
    process.stderr.write(`analyze: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}\n`);
    process.exitCode = 1;
  },
);

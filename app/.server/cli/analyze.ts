/**
 * The command-line door to the tracking job: the same trackFrameStack the server's worker pool
 * runs, on a folder of frames. Exactly one JSON document goes to stdout; progress and messages go
 * to stderr. Exit codes: 0 done, 1 the frames could not be tracked, 2 wrong arguments, 130
 * interrupted.
 */
import { readdir, stat } from "node:fs/promises";
import path from "node:path";
import { compare } from "natural-orderby";
import type { TheoryCheckResult } from "../../lib/analysis/check";
import { checkTracks } from "../../lib/analysis/check-tracks";
import { omegaFromTableRate } from "../../lib/analysis/run-omega";
import type { Track, TrackingSetup } from "../../lib/tracking/types";
import { TrackingError } from "../tracking/errors";
import { trackFrameStack, type TrackFrameStackResult } from "../tracking/track-frame-stack";
import { closeTrackingPool } from "../tracking/tracking-pool";
import { parseAnalyzeArguments, usage, UsageError, type AnalyzeArguments } from "./analyze-arguments";

const frameExtensions = new Set([".jpg", ".jpeg", ".png", ".tif", ".tiff", ".webp"]);

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
  return omegaFromTableRate(args.rpm, args.direction);
}

/** The check's figures the JSON carries, for the combined check and for each track. */
function checkFigures(result: TheoryCheckResult | Omit<TheoryCheckResult, "series">) {
  return {
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

/** The theory check on every track, combined (lib/analysis/check-tracks): the one place where tracking output meets the physics. */
function theoryCheck(args: AnalyzeArguments, tracks: Track[]) {
  const checked = checkTracks(
    tracks.map((track) => ({
      number: track.id,
      input: {
        points: track.points.map(({ t, x, y }) => ({ t, x, y })),
        setup: { centre: args.centre, pxPerM: args.pxPerCm === null ? null : args.pxPerCm * 100, mirrored: args.mirrored },
        omegaSet: omegaSet(args),
        cameraMode: args.camera,
      },
    })),
    args.tracer === "dye" ? "dye patch" : "float",
  );
  if (!checked) return { check: null, checks: [] };
  const c = checked.combination;
  return {
    check: {
      trackId: c?.representativeTrack ?? null,
      ...checkFigures(checked.check),
      combination: c && {
        n: c.n,
        of: c.of,
        chi2: c.chi2,
        dof: c.dof,
        birgeRatio: c.birgeRatio,
        pValue: c.pValue,
        scale: c.scale,
        consistent: c.consistent,
        words: c.words,
      },
    },
    checks: checked.checks.map((t) => ({ trackId: t.trackNumber, ...checkFigures(t), combined: t.combined, pull: t.pull, flagged: t.flagged })),
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
    // check: the combined verdict; checks: each track's own, by the track's id above.
    ...theoryCheck(args, result.tracks),
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

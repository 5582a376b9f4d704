import { execFile } from "node:child_process";
import { mkdir, mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { writeSyntheticStack, type WrittenStack } from "../../../tests/fixtures/tracking/write-stack";
import { parseAnalyzeArguments } from "./analyze-arguments";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "../../..");
const rpm = 10;
const omega = (2 * Math.PI * rpm) / 60;

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

/** Runs the command as `npm run analyze` does: tsx on the TypeScript source. */
function analyze(args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    execFile(
      path.join(root, "node_modules/.bin/tsx"),
      [path.join(root, "app/.server/cli/analyze.ts"), ...args],
      { cwd: root, timeout: 30_000 },
      (error, stdout, stderr) => {
        const code = error ? (typeof error.code === "number" ? error.code : -1) : 0;
        resolve({ code, stdout, stderr });
      },
    );
  });
}

let dir: string;
let stack: WrittenStack;

beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-analyze-"));
  // Unpadded names: frame_2 must come before frame_10.
  stack = await writeSyntheticStack(
    path.join(dir, "frames"),
    {
      width: 320,
      height: 240,
      frames: 60,
      fps: 30,
      seed: 5,
      camera: "lab",
      omega,
      centre: { x: 160, y: 120 },
      pxPerM: 1000,
      tankRadiusPx: 110,
      noiseSigma: 3,
      illuminationGradient: 0.2,
      glare: { x: 230, y: 170, radiusPx: 6, strength: 140 },
      tracers: [
        {
          kind: "float",
          path: { kind: "inertial-circle", centre: { x: -0.02, y: 0.01 }, radius: 0.045, phase: 0.3 },
          sigmaPx: 2.2,
          brightness: 110,
        },
      ],
    },
    { format: "jpeg", name: (i) => `frame_${i + 1}` },
  );
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

const good = ["--rpm", String(rpm), "--direction", "ccw", "--fps", "30", "--camera", "lab", "--centre", "160,120", "--tracer", "float"];

describe("npm run analyze", () => {
  it("prints one JSON document with the track in natural frame order and the theory check", async () => {
    const run = await analyze([path.join(dir, "frames"), ...good, "--px-per-cm", "10", "--tank-edge", "160,120,106"]);
    expect(run.code).toBe(0);
    expect(run.stderr).toMatch(/60\/60 frames searched/);
    const doc = JSON.parse(run.stdout);
    expect(run.stdout.trim().split("\n")).toHaveLength(1);
    expect([doc.frames, doc.width, doc.height]).toEqual([60, 320, 240]);
    expect(doc.tracks).toHaveLength(1);
    const points: { t: number; x: number; y: number }[] = doc.tracks[0].points;
    expect(points).toHaveLength(60);
    const rms = Math.sqrt(points.reduce((s, p, i) => s + (p.x - stack.truth[i]![0]!.x) ** 2 + (p.y - stack.truth[i]![0]!.y) ** 2, 0) / points.length);
    expect(rms).toBeLessThanOrEqual(0.1);
    expect(points[10]!.t).toBeCloseTo(10 / 30, 6);
    expect(doc.quality.framesDetectedShare).toBe(1);
    // A float on an inertial circle drawn with f = 2Ω must come back as agreeing, deflected right (Ω > 0).
    expect(doc.check.verdict).toBe("agrees");
    expect(doc.check.deflection).toBe("right");
    expect(doc.check.fMeasured).toBeGreaterThan(2 * omega * 0.97);
    expect(doc.check.fMeasured).toBeLessThan(2 * omega * 1.03);
    expect(doc.check.circle.radiusM).toBeCloseTo(0.045, 3);
    // One float: one per-track check, the same as the combined one.
    expect(doc.checks).toHaveLength(1);
    expect(doc.checks[0]).toMatchObject({ trackId: doc.tracks[0].id, fMeasured: doc.check.fMeasured, verdict: "agrees", combined: true, flagged: false });
    expect(doc.check.combination).toMatchObject({ n: 1, of: 1, scale: 1, consistent: true });
  });

  it.each([
    ["a missing frame rate", good.filter((_, i) => i !== 4 && i !== 5), /--fps is required/],
    ["an unknown option", [...good, "--speed", "3"], /Unknown option '--speed'/],
  ])("exits with 2 and the usage on %s", async (_, args, reason) => {
    const run = await analyze([path.join(dir, "frames"), ...args]);
    expect(run.code).toBe(2);
    expect(run.stdout).toBe("");
    expect(run.stderr).toMatch(reason);
    expect(run.stderr).toMatch(/Usage: npm run --silent analyze -- <frames-dir>/);
  });

  it("exits with 1 and the reason on a folder without frames", async () => {
    await mkdir(path.join(dir, "nothing"), { recursive: true });
    const run = await analyze([path.join(dir, "nothing"), ...good]);
    expect(run.code).toBe(1);
    expect(run.stdout).toBe("");
    expect(run.stderr).toMatch(/no frames to track/);
  });
});

describe("analyze arguments", () => {
  it("reads every argument", () => {
    const parsed = parseAnalyzeArguments(["frames", ...good, "--px-per-cm", "12.5", "--tank-edge", "160,120,100", "--mirrored"]);
    expect(parsed).toEqual({
      framesDir: "frames",
      rpm: 10,
      direction: "ccw",
      fps: 30,
      camera: "lab",
      centre: { x: 160, y: 120 },
      tracer: "float",
      pxPerCm: 12.5,
      tankEdge: { cx: 160, cy: 120, r: 100 },
      mirrored: true,
    });
  });

  it.each([
    ["an unknown camera mode", good.map((a) => (a === "lab" ? "sideways" : a)), /--camera must be rotating or lab, not "sideways"/],
    ["a centre that is not two numbers", good.map((a) => (a === "160,120" ? "160," : a)), /--centre needs 2 numbers/],
    ["a frame rate of zero", good.map((a) => (a === "30" ? "0" : a)), /--fps must be a number above zero/],
    ["a negative rate", ["--rpm=-3", ...good.slice(2)], /--rpm must be a number of zero or more, not "-3"/],
    ["two folders", ["a", "b", ...good], /exactly one folder/],
  ])("refuses %s", (_, args, reason) => {
    expect(() => parseAnalyzeArguments(args[0] === "a" ? args : ["frames", ...args])).toThrow(reason);
  });
});

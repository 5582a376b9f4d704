import { copyFile, mkdir, mkdtemp, readFile, rm, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import type { SyntheticRunSpec, SyntheticTracer } from "../../lib/tracking/synthetic";
import type { FrameDetections, Track, TrackingSetup } from "../../lib/tracking/types";
import { writeSyntheticStack, type WrittenStack } from "../../../tests/fixtures/tracking/write-stack";
import { TrackingError } from "./errors";
import { trackFrameStack } from "./track-frame-stack";
import { closeTrackingPool } from "./tracking-pool";

const centre = { x: 160.3, y: 119.6 };
const circle = { kind: "inertial-circle", centre: { x: -20, y: 10 }, radius: 45, phase: 0.3 } as const;
const float: SyntheticTracer = { kind: "float", path: circle, sigmaPx: 2.2, brightness: 110 };
const dye: SyntheticTracer = {
  kind: "dye",
  path: circle,
  sigmaAlongPx: 5,
  sigmaAcrossPx: 2.2,
  colour: [200, 30, 60],
  opacity: 0.8,
};

function spec(tracers: SyntheticTracer[], frames: number, camera: "rotating" | "lab" = "lab"): SyntheticRunSpec {
  return {
    width: 320,
    height: 240,
    frames,
    fps: 30,
    seed: 21,
    camera,
    omega: 1.2,
    centre,
    pxPerM: 1,
    tankRadiusPx: 110,
    noiseSigma: 3,
    illuminationGradient: 0.3,
    glare: { x: 230, y: 170, radiusPx: 6, strength: 140 },
    tracers,
  };
}

function setup(tracer: TrackingSetup["tracer"]): TrackingSetup {
  return { tracer, centre, tankEdge: { cx: centre.x, cy: centre.y, r: 106 }, mirrored: false };
}

function rmsError(track: Track, truth: WrittenStack["truth"]): number {
  const sum = track.points.reduce((s, p) => s + (p.x - truth[p.frameIndex]![0]!.x) ** 2 + (p.y - truth[p.frameIndex]![0]!.y) ** 2, 0);
  return Math.sqrt(sum / track.points.length);
}

let dir: string;
let floatStack: WrittenStack;
let emptyStack: WrittenStack;

beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-track-"));
  floatStack = await writeSyntheticStack(path.join(dir, "float"), spec([float], 60));
  emptyStack = await writeSyntheticStack(path.join(dir, "empty"), spec([], 8));
});

afterAll(async () => {
  await closeTrackingPool();
  await rm(dir, { recursive: true, force: true });
});

describe("trackFrameStack", () => {
  it("tracks a float in a lab-fixed stack to ≤ 0.1 px RMS (Crocker & Grier 1996 yardstick), with progress", async () => {
    const progress: [number, number][] = [];
    const searched: number[] = [];
    const started = performance.now();
    const result = await trackFrameStack({
      files: floatStack.files,
      times: floatStack.times,
      setup: setup("float"),
      onProgress: (done, total) => progress.push([done, total]),
      onFrameDetections: (f) => searched.push(f.frameIndex),
    });
    const rms = rmsError(result.tracks[0]!, floatStack.truth);
    console.info(`float, lab view, PNG: RMS ${rms.toFixed(3)} px, ${(performance.now() - started).toFixed(0)} ms for 60 frames`);
    expect([result.frames, result.width, result.height]).toEqual([60, 320, 240]);
    expect(result.tracks).toHaveLength(1);
    expect(result.tracks[0]!.points).toHaveLength(60);
    expect(rms).toBeLessThanOrEqual(0.1);
    expect(result.quality.framesDetectedShare).toBeGreaterThanOrEqual(0.99);
    expect(result.quality.jitterPx as number).toBeLessThan(0.1);
    expect(progress.at(-1)).toEqual([60, 60]);
    expect(searched.sort((a, b) => a - b)).toEqual([...Array(60).keys()]);
    expect(result.tracks[0]!.points[10]!.t).toBeCloseTo(10 / 30, 12);
  });

  it("resumes part-way with the detections already kept and ends with the same track", async () => {
    const whole = await trackFrameStack({ files: floatStack.files, times: floatStack.times, setup: setup("float") });
    const prior: FrameDetections[] = whole.detections.filter((f) => f.frameIndex < 35);
    const searched: number[] = [];
    const resumed = await trackFrameStack({
      files: floatStack.files,
      times: floatStack.times,
      setup: setup("float"),
      startAt: 35,
      priorDetections: prior,
      onFrameDetections: (f) => searched.push(f.frameIndex),
    });
    expect(Math.min(...searched)).toBe(35);
    expect(resumed.tracks).toEqual(whole.tracks);
  });

  it("tracks dye through JPEG frames (colour at half resolution: within 0.25 px)", async () => {
    const stack = await writeSyntheticStack(path.join(dir, "dye"), spec([dye], 40, "rotating"), { format: "jpeg", quality: 92 });
    const result = await trackFrameStack({ files: stack.files, times: stack.times, setup: setup("dye") });
    const rms = rmsError(result.tracks[0]!, stack.truth);
    console.info(`dye, co-rotating view, JPEG q92: RMS ${rms.toFixed(3)} px`);
    expect(result.tracks).toHaveLength(1);
    expect(result.quality.framesDetectedShare).toBeGreaterThanOrEqual(0.99);
    expect(rms).toBeLessThanOrEqual(0.25);
  });

  it("stops promptly when the job is cancelled", async () => {
    const controller = new AbortController();
    let abortedAt = 0;
    const job = trackFrameStack({
      files: floatStack.files,
      times: floatStack.times,
      setup: setup("float"),
      onFrameDetections: () => {
        if (!abortedAt) {
          abortedAt = performance.now();
          controller.abort();
        }
      },
      signal: controller.signal,
    });
    await expect(job).rejects.toMatchObject({ name: "AbortError", code: "cancelled" });
    expect(performance.now() - abortedAt).toBeLessThan(1000);
  });
});

describe("trackFrameStack on bad input: a clear reason, no hang", () => {
  async function failure(files: string[], tracer: TrackingSetup["tracer"] = "float"): Promise<TrackingError> {
    const error = await trackFrameStack({ files, times: files.map((_, i) => i / 30), setup: setup(tracer) }).then(
      () => null,
      (e: unknown) => e,
    );
    expect(error).toBeInstanceOf(TrackingError);
    return error as TrackingError;
  }

  /** The empty stack's frames in a folder of their own, with one of them replaced. */
  async function withFrame(folder: string, ext: string, index: number, write: (file: string) => Promise<void>): Promise<string[]> {
    await mkdir(path.join(dir, folder), { recursive: true });
    const files: string[] = [];
    for (let i = 0; i < emptyStack.files.length; i++) {
      const file = path.join(dir, folder, `frame_${String(i + 1).padStart(4, "0")}${i === index ? ext : ".png"}`);
      if (i === index) await write(file);
      else await copyFile(emptyStack.files[i]!, file);
      files.push(file);
    }
    return files;
  }

  it("no frames", async () => {
    const error = await failure([]);
    expect(error.code).toBe("no-frames");
    expect(error.message).toMatch(/no frames/);
  });

  it("an empty file", async () => {
    const files = await withFrame("empty-file", ".png", 2, (f) => writeFile(f, ""));
    const error = await failure(files);
    expect(error.message).toBe("Unreadable frame 3 (frame_0003.png): the file is empty.");
    expect(error.frameIndex).toBe(2);
  });

  it("a truncated JPEG", async () => {
    const files = await withFrame("truncated", ".jpg", 3, async (f) => {
      const jpeg = await sharp(await readFile(emptyStack.files[3]!))
        .jpeg({ quality: 90 })
        .toBuffer();
      await writeFile(f, jpeg.subarray(0, Math.floor(jpeg.length / 2)));
    });
    const error = await failure(files);
    expect(error.code).toBe("unreadable-frame");
    expect(error.message).toMatch(/^Unreadable frame 4 \(frame_0004\.jpg\): the file is cut short \(truncated\)\.$/);
  });

  it("a file that is not an image", async () => {
    const files = await withFrame("not-image", ".png", 1, (f) => writeFile(f, "frame list, not a frame\n"));
    const error = await failure(files);
    expect(error.message).toBe("Unreadable frame 2 (frame_0002.png): it is not a JPEG, PNG, TIFF or WebP image.");
  });

  it("a frame of another size", async () => {
    const files = await withFrame("other-size", ".png", 4, async (f) => {
      await sharp(await readFile(emptyStack.files[4]!))
        .resize(160, 120)
        .png()
        .toFile(f);
    });
    const error = await failure(files);
    expect(error.code).toBe("frame-size");
    expect(error.message).toMatch(/frame 5 \(frame_0005\.png\) is 160×120 px but the stack's first frame is 320×240 px/);
  });

  it.each(["float", "dye"] as const)("a %s tracer never found", async (tracer) => {
    const error = await failure(emptyStack.files, tracer);
    expect(error.code).toBe("tracer-not-found");
    expect(error.message).toBe(`The tracer was not found in any frame — check the tracer kind (${tracer}) and the tank edge.`);
  });

  it("a tank edge outside the frame", async () => {
    const error = await trackFrameStack({
      files: emptyStack.files,
      times: emptyStack.times,
      setup: { ...setup("float"), tankEdge: { cx: 900, cy: 900, r: 50 } },
    }).catch((e: unknown) => e as TrackingError);
    expect(error).toBeInstanceOf(TrackingError);
    expect((error as TrackingError).code).toBe("bad-setup");
    expect((error as TrackingError).message).toMatch(/tank edge .* lies outside the 320×240 frame/);
  });
});

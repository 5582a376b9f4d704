import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { writeSyntheticStack, type WrittenStack } from "../../../tests/fixtures/tracking/write-stack";
import { medianInto } from "../../lib/tracking/background";
import { planDetection, planKey } from "../../lib/tracking/plan";
import { decodeFrame } from "./decode-frame";
import { unknownStack, type StackShare } from "./stack-share";
import { closeTrackingPool, prepareStackSearch } from "./track-frame-stack";
import runTrackTask from "./track-worker";

const centre = { x: 160.3, y: 119.6 };
const setup = { tracer: "float" as const, centre, tankEdge: { cx: centre.x, cy: centre.y, r: 106 }, mirrored: false };
const size = { width: 320, height: 240 };

let dir: string;
let stack: WrittenStack;

beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-stack-share-"));
  stack = await writeSyntheticStack(path.join(dir, "float"), {
    ...size,
    frames: 24,
    fps: 30,
    seed: 11,
    camera: "lab",
    omega: 1.2,
    centre,
    pxPerM: 1,
    tankRadiusPx: 110,
    noiseSigma: 3,
    illuminationGradient: 0.3,
    tracers: [{ kind: "float", path: { kind: "inertial-circle", centre: { x: -20, y: 10 }, radius: 45, phase: 0.3 }, sigmaPx: 2.2, brightness: 110 }],
  });
});

afterAll(async () => {
  await closeTrackingPool();
  await rm(dir, { recursive: true, force: true });
});

describe("a frame's task names its stack and slot", () => {
  it("finds what the same frame sent whole finds, asks for a stack it does not hold, and lets the oldest go", async () => {
    const plan = planDetection(setup, size.width, size.height);
    const key = planKey(plan);
    const frameBytes = plan.crop.width * plan.crop.height;
    const frames = await Promise.all(stack.files.map((file, i) => decodeFrame(file, i, plan)));
    const background = new Uint8Array(frameBytes);
    medianInto([frames[0]!, frames[8]!, frames[16]!], background, 0, frameBytes);
    const slots = new Uint8Array(new SharedArrayBuffer(2 * frameBytes));
    const share = (id: number): StackShare => ({ id, plan, planKey: key, background, turning: null, slots, frameBytes });

    expect(runTrackTask({ kind: "detect-in-stack", stack: 1, slot: 0, windows: null, angle: null })).toBe(unknownStack);
    let finds = 0;
    for (const [index, image] of frames.entries()) {
      const slot = index % 2;
      slots.set(image, slot * frameBytes);
      const whole = runTrackTask({ kind: "detect", plan, planKey: key, image: image.slice(), background, windows: null });
      // The stack goes with the first frame only; the worker keeps it for the rest.
      const named = runTrackTask({ kind: "detect-in-stack", stack: 1, share: index === 0 ? share(1) : undefined, slot, windows: null, angle: null });
      expect(named).toEqual(whole);
      finds += Array.isArray(whole) ? whole.length : 0;
    }
    expect(finds).toBe(frames.length);

    // Two stacks more: the first is let go and must be sent again.
    for (const id of [2, 3]) runTrackTask({ kind: "detect-in-stack", stack: id, share: share(id), slot: 0, windows: null, angle: null });
    expect(runTrackTask({ kind: "detect-in-stack", stack: 1, slot: 0, windows: null, angle: null })).toBe(unknownStack);
    expect(runTrackTask({ kind: "detect-in-stack", stack: 3, slot: 0, windows: null, angle: null })).not.toBe(unknownStack);
  });

  it("searches more frames at once than a stack has slots, each as when searched alone", async () => {
    const search = await prepareStackSearch(stack.files, setup, size);
    const alone = [];
    for (const [index, file] of stack.files.entries()) alone.push(await search.detect(file, index));
    // All at once: the first frames take the slots, the rest go in buffers of their own.
    const together = await Promise.all(stack.files.map((file, index) => search.detect(file, index)));
    expect(together).toEqual(alone);
    expect(alone.every((found) => found.length === 1)).toBe(true);
  });
});

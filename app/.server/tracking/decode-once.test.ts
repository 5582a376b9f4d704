import { mkdtemp, rm } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { smallLabFloatCentre, smallLabFloatSpec, writeSyntheticStack, type WrittenStack } from "../../../tests/fixtures/tracking/write-stack";
import { decodeFrame } from "./decode-frame";
import { prepareStackSearch, trackFrameStack } from "./track-frame-stack";
import { closeTrackingPool } from "./tracking-pool";

vi.mock("./decode-frame", async (importOriginal) => {
  const actual = await importOriginal<typeof import("./decode-frame")>();
  return { ...actual, decodeFrame: vi.fn(actual.decodeFrame) };
});

const centre = smallLabFloatCentre;
const setup = { tracer: "float" as const, centre, tankEdge: { cx: centre.x, cy: centre.y, r: 106 }, mirrored: false };

let dir: string;
let stack: WrittenStack;

beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-decode-once-"));
  stack = await writeSyntheticStack(path.join(dir, "float"), smallLabFloatSpec(40, 0.3));
});

afterAll(async () => {
  await closeTrackingPool();
  await rm(dir, { recursive: true, force: true });
});

/** How many times each frame index was decoded since the mock was last cleared. */
function decodesPerFrame(): number[] {
  const counts = new Array<number>(stack.files.length).fill(0);
  for (const call of vi.mocked(decodeFrame).mock.calls) counts[call[1]]!++;
  return counts;
}

describe("a job's pass decodes each frame once", () => {
  it("searches the background's sampled frames from the crops already decoded for it, and finds the same", async () => {
    vi.mocked(decodeFrame).mockClear();
    const result = await trackFrameStack({ files: stack.files, times: stack.times, setup });
    expect(decodesPerFrame()).toEqual(new Array<number>(stack.files.length).fill(1));
    expect(result.tracks).toHaveLength(1);
    expect(result.tracks[0]!.points).toHaveLength(stack.files.length);

    // The streaming tracker's way (frames may be replaced after the background is made): every
    // searched frame decoded from its file; the detections are the same.
    vi.mocked(decodeFrame).mockClear();
    const search = await prepareStackSearch(stack.files, setup, { width: 320, height: 240 });
    const sampled = decodesPerFrame();
    for (const [index, file] of stack.files.entries()) {
      const found = await search.detect(file, index);
      expect(found).toEqual(result.detections[index]!.detections);
    }
    const after = decodesPerFrame();
    expect(after.map((n, i) => n - sampled[i]!)).toEqual(new Array<number>(stack.files.length).fill(1));
  });
});

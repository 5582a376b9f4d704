import { describe, expect, it } from "vitest";
import { parseFrameStream, streamPlan, streamingOrder, type DroppedFile } from "./frame-stream";
import { backgroundSampleIndices } from "./tracking/background";

const stills = (names: string[]): DroppedFile[] => names.map((name) => ({ name, video: false }));
const ready = { framesInRun: 0, setup: "present" } as const;

describe("streamPlan", () => {
  it("numbers stills by natural name order (frame_2 before frame_10), whatever order they were dropped in", () => {
    const names = ["frame_10.jpg", "frame_2.jpg", "frame_1.jpg", "frame_3.jpg"];
    const plan = streamPlan(stills(names), ready);
    if (!plan.stream) throw new Error(plan.why);
    expect(plan.expectedFrames).toBe(4);
    const placeOf = new Map(plan.sends.map((s) => [names[s.file], s.frameNumber]));
    expect(placeOf).toEqual(
      new Map([
        ["frame_1.jpg", 1],
        ["frame_2.jpg", 2],
        ["frame_3.jpg", 3],
        ["frame_10.jpg", 4],
      ]),
    );
  });

  it("sends the still background's frames first, then the rest in stack order, each file once", () => {
    const names = Array.from({ length: 60 }, (_, i) => `img${String(59 - i).padStart(3, "0")}.png`);
    const plan = streamPlan(stills(names), ready);
    if (!plan.stream) throw new Error(plan.why);
    const sampled = backgroundSampleIndices(60).map((i) => i + 1);
    expect(sampled.length).toBe(21);
    expect(plan.sends.slice(0, 21).map((s) => s.frameNumber)).toEqual(sampled);
    const rest = plan.sends.slice(21).map((s) => s.frameNumber);
    expect(rest).toEqual([...rest].sort((a, b) => a - b));
    expect(new Set(plan.sends.map((s) => s.file)).size).toBe(60);
    expect(plan.sends.map((s) => s.frameNumber)).toEqual(streamingOrder(60).map((i) => i + 1));
    // img059 was dropped first and is last by name.
    expect(plan.sends.find((s) => s.file === 0)?.frameNumber).toBe(60);
  });

  it("declares what the upload route accepts", () => {
    const plan = streamPlan(stills(["a.jpg", "b.jpg", "c.jpg"]), { framesInRun: 0, setup: "carried over" });
    if (!plan.stream) throw new Error(plan.why);
    for (const s of plan.sends) expect(parseFrameStream(String(s.frameNumber), String(plan.expectedFrames)).ok).toBe(true);
  });

  it.each([
    [
      "a ZIP",
      [
        { name: "a.jpg", video: false },
        { name: "b.jpg", video: false },
        { name: "stack.ZIP", video: false },
      ],
      ready,
      /ZIP/,
    ],
    ["a video", [{ name: "run.mp4", video: true }], ready, /video/],
    ["a run with frames already", stills(["a.jpg", "b.jpg", "c.jpg"]), { framesInRun: 5, setup: "present" as const }, /already has frames/],
    ["no view setup", stills(["a.jpg", "b.jpg", "c.jpg"]), { framesInRun: 0, setup: "none" as const }, /no view setup/],
    ["two stills", stills(["a.jpg", "b.jpg"]), ready, /fewer than three/],
    ["two files of one name", stills(["a.jpg", "b.jpg", "a.jpg"]), ready, /two files are called a\.jpg/],
  ])("does not stream %s, and says why", (_label, files, context, why) => {
    const plan = streamPlan(files, context);
    expect(plan.stream).toBe(false);
    if (!plan.stream) expect(plan.why).toMatch(why);
  });
});

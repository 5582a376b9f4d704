import { describe, expect, it } from "vitest";
import { cutFrameName, FrameTimeline, parseFrameTime } from "./video-frames";

describe("taking presented video frames", () => {
  it("takes each new picture once, with its own time, and ignores a repeat", () => {
    const t = new FrameTimeline();
    expect(t.offer(0, 1)).toEqual({ kind: "new", index: 0, timeS: 0 });
    expect(t.offer(0, 1)).toEqual({ kind: "repeat" });
    expect(t.offer(0.033333, 2)).toEqual({ kind: "new", index: 1, timeS: 0.033333 });
    expect(t.offer(0.066667, 3)).toEqual({ kind: "new", index: 2, timeS: 0.066667 });
    expect(t.times).toEqual([0, 0.033333, 0.066667]);
    expect(t.check(3)).toBeNull();
  });

  it("calls it a gap when the decoder presented a frame that was not offered", () => {
    const t = new FrameTimeline();
    t.offer(0, 1);
    const offer = t.offer(0.066667, 3);
    expect(offer.kind).toBe("gap");
    expect(offer.kind === "gap" && offer.reason).toMatch(/1 frame\(s\) were shown without being taken/);
    expect(t.times).toEqual([0]);
  });

  it("calls it a gap when the decoder dropped a frame, or time runs backwards", () => {
    const dropped = new FrameTimeline();
    dropped.offer(0, 1, 0);
    expect(dropped.offer(0.1, 2, 1).kind).toBe("gap");
    const backwards = new FrameTimeline();
    backwards.offer(0.5, 1);
    expect(backwards.offer(0.4, 2).kind).toBe("gap");
  });

  it("compares what was taken with a stated frame count", () => {
    const t = new FrameTimeline();
    for (let i = 0; i < 5; i++) t.offer(i / 30, i + 1);
    expect(t.check(5)).toBeNull();
    expect(t.check(null)).toBeNull();
    expect(t.check(6)).toBe("the decoder counted 6 frames but 5 were taken");
  });

  it("names cut frames after the video, in order", () => {
    expect(cutFrameName("run 12 (top).webm", 7)).toBe("run_12_top__00007.jpg");
    expect(cutFrameName(".mp4", 0)).toBe("video_00000.jpg");
  });
});

describe("a frame time sent with an upload", () => {
  it("is taken as seconds when finite, 0 or more and below 1e5 s", () => {
    expect(parseFrameTime("0")).toEqual({ ok: true, timeS: 0 });
    expect(parseFrameTime("2.966667")).toEqual({ ok: true, timeS: 2.966667 });
    expect(parseFrameTime("1e-3")).toEqual({ ok: true, timeS: 0.001 });
    expect(parseFrameTime("99999.5")).toEqual({ ok: true, timeS: 99999.5 });
    expect(parseFrameTime(null)).toEqual({ ok: true, timeS: null });
    expect(parseFrameTime("")).toEqual({ ok: true, timeS: null });
  });

  it("is refused with the reason otherwise", () => {
    const message = (raw: unknown) => {
      const r = parseFrameTime(raw);
      return r.ok ? "accepted" : r.message;
    };
    expect(message("-0.5")).toMatch(/before the start/);
    expect(message("100000")).toMatch(/beyond 100000 s/);
    expect(message("1e400")).toMatch(/finite/);
    expect(message("Infinity")).toMatch(/not a number of seconds/);
    expect(message("NaN")).toMatch(/not a number of seconds/);
    expect(message("0x10")).toMatch(/not a number of seconds/);
    expect(message("3 s")).toMatch(/not a number of seconds/);
    expect(message(new File(["1"], "t.txt"))).toMatch(/form field/);
  });
});

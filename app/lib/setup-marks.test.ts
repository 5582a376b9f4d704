import { describe, expect, it } from "vitest";
import { marksOf, nudge, setupMarks, type SetupValues } from "./setup-marks";

const frame = { width: 640, height: 360 };
const values: SetupValues = {
  centre: { x: 320, y: 180 },
  edge: { cx: 321, cy: 179, r: 150 },
  scalePoints: [
    { x: 100, y: 300 },
    { x: 200, y: 300 },
  ],
  scaleLengthCm: 10,
  rateMark: { x: 400, y: 120 },
  mirrored: false,
  rimPoints: [
    { x: 170, y: 180 },
    { x: 470, y: 181 },
  ],
  knownPoints: [],
};
const mark = (id: string) => {
  const m = setupMarks.find((s) => s.id === id);
  if (!m) throw new Error(`no mark ${id}`);
  return m;
};

describe("nudging a view setup's marks", () => {
  it("moves the selected mark by 1 px, or 10 with Shift, and nothing else", () => {
    expect(nudge(values, mark("centre"), "ArrowRight", false, frame).centre).toEqual({ x: 321, y: 180 });
    expect(nudge(values, mark("centre"), "ArrowUp", true, frame).centre).toEqual({ x: 320, y: 170 });
    const moved = nudge(values, mark("scale-2"), "ArrowDown", false, frame);
    expect(moved.scalePoints).toEqual([
      { x: 100, y: 300 },
      { x: 200, y: 301 },
    ]);
    expect(moved.centre).toEqual(values.centre);
    // The tank edge moves as a whole: its radius stays.
    expect(nudge(values, mark("edge"), "ArrowLeft", true, frame).edge).toEqual({ cx: 311, cy: 179, r: 150 });
  });

  it("keeps the mark inside the frame and ignores other keys and unplaced marks", () => {
    const corner = { ...values, centre: { x: 635, y: 2 } };
    expect(nudge(corner, mark("centre"), "ArrowRight", true, frame).centre).toEqual({ x: 640, y: 2 });
    expect(nudge(corner, mark("centre"), "ArrowUp", true, frame).centre).toEqual({ x: 635, y: 0 });
    expect(nudge(values, mark("centre"), "Enter", false, frame)).toBe(values);
    const bare = { ...values, scalePoints: null };
    expect(nudge(bare, mark("scale-1"), "ArrowLeft", false, frame)).toBe(bare);
  });

  it("lists every mark once, each found where the values put it", () => {
    expect(new Set(setupMarks.map((m) => m.id)).size).toBe(setupMarks.length);
    expect(setupMarks.map((m) => m.at(values))).toEqual([
      { x: 320, y: 180 },
      { x: 321, y: 179 },
      { x: 100, y: 300 },
      { x: 200, y: 300 },
      { x: 400, y: 120 },
    ]);
  });
});

describe("rim points as marks", () => {
  it("lists one mark per rim point after the fixed ones, and nudges only the chosen point", () => {
    const marks = marksOf(values);
    expect(marks.map((m) => m.id).slice(-2)).toEqual(["rim-1", "rim-2"]);
    const second = marks.find((m) => m.id === "rim-2")!;
    const moved = nudge(values, second, "ArrowLeft", true, frame);
    expect(moved.rimPoints).toEqual([
      { x: 170, y: 180 },
      { x: 460, y: 181 },
    ]);
    expect(moved.centre).toEqual(values.centre);
  });
});

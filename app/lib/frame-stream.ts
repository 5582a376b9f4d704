/**
 * What a client streaming a stack declares with each frame (Decision 61): the frame's number in
 * the finished stack (1-based, in the stack's own order: by time, else by file name) and how many
 * frames the stack will have. Both or neither; the upload that brings the stack to the declared
 * count starts its tracking. Shared by the upload route and the run page's uploader.
 */
import { orderBy } from "natural-orderby";
import { uploadLimits } from "./upload-limits";
import { backgroundSampleIndices } from "./tracking/background";

export interface FrameStreamDeclaration {
  /** 1-based place of this frame in the finished stack. */
  frameNumber: number;
  expectedFrames: number;
}

type Parsed = { ok: true; declared: FrameStreamDeclaration | null } | { ok: false; message: string };

function wholeNumber(raw: string): number | null {
  const text = raw.trim();
  return /^\d{1,6}$/.test(text) ? Number(text) : null;
}

export function parseFrameStream(frameNumber: unknown, expectedFrames: unknown): Parsed {
  const given = (v: unknown) => v !== null && v !== undefined && v !== "";
  if (!given(frameNumber) && !given(expectedFrames)) return { ok: true, declared: null };
  if (typeof frameNumber !== "string" || typeof expectedFrames !== "string" || !given(frameNumber) || !given(expectedFrames)) {
    return { ok: false, message: "Send frameNumber and expectedFrames together, as form fields, or neither." };
  }
  const expected = wholeNumber(expectedFrames);
  if (expected === null || expected < 3 || expected > uploadLimits.maxFramesPerRun) {
    return { ok: false, message: `expectedFrames must be a whole number from 3 to ${uploadLimits.maxFramesPerRun}, not "${expectedFrames.slice(0, 20)}".` };
  }
  const number = wholeNumber(frameNumber);
  if (number === null || number < 1 || number > expected) {
    return { ok: false, message: `frameNumber must be a whole number from 1 to expectedFrames (${expected}), not "${frameNumber.slice(0, 20)}".` };
  }
  return { ok: true, declared: { frameNumber: number, expectedFrames: expected } };
}

/**
 * The order to send a stack of `count` frames in (0-based indices into the stack's order): the
 * frames the still background is made of first, so that every later frame can be searched as it
 * lands, then the rest in order.
 */
export function streamingOrder(count: number): number[] {
  const first = backgroundSampleIndices(count);
  const chosen = new Set(first);
  const rest: number[] = [];
  for (let i = 0; i < count; i++) if (!chosen.has(i)) rest.push(i);
  return [...first, ...rest];
}

/** A file the technician dropped, as the planner needs it: its name, and whether it is a video. */
export interface DroppedFile {
  name: string;
  video: boolean;
}

/** What the run offers a stream: frames already in it, and whether it will have a view setup before the frames. */
export interface StreamContext {
  framesInRun: number;
  setup: "present" | "carried over" | "none";
}

export type StreamPlan =
  | {
      stream: true;
      expectedFrames: number;
      /** In sending order: which dropped file (index into the list given) and its 1-based place in the stack. */
      sends: { file: number; frameNumber: number }[];
    }
  | { stream: false; why: string };

/**
 * How the run page's uploader sends a drop of files: as a stream (each still declaring its place
 * in the stack, ordered by name as the server orders stills, the still background's frames first)
 * when the places are known before the first byte is sent and the frames can be searched against a
 * view setup; otherwise as before, with the reason in words for the page.
 */
export function streamPlan(files: readonly DroppedFile[], context: StreamContext): StreamPlan {
  if (files.some((f) => f.video)) return { stream: false, why: "a video is cut into frames here first, and they are tracked once all of them are in" };
  if (files.some((f) => /\.zip$/i.test(f.name)))
    return { stream: false, why: "a ZIP is unpacked on the server as one upload, so its frames are tracked once it is all in" };
  if (context.framesInRun > 0)
    return { stream: false, why: "the run already has frames, so where the new ones fall in the stack is known only once they are in" };
  if (files.length < 3) return { stream: false, why: "a stack of fewer than three frames is tracked once it is in" };
  if (files.length > uploadLimits.maxFramesPerRun) return { stream: false, why: `a run holds at most ${uploadLimits.maxFramesPerRun} frames` };
  const seen = new Set<string>();
  for (const f of files) {
    if (seen.has(f.name)) return { stream: false, why: `two files are called ${f.name}, so their order in the stack is not known beforehand` };
    seen.add(f.name);
  }
  if (context.setup === "none") return { stream: false, why: "the run has no view setup yet, and the frames are searched against one" };
  const byName = orderBy(
    files.map((f, file) => ({ name: f.name, file })),
    [(f) => f.name],
    ["asc"],
  );
  return {
    stream: true,
    expectedFrames: byName.length,
    sends: streamingOrder(byName.length).map((place) => ({ file: byName[place]!.file, frameNumber: place + 1 })),
  };
}

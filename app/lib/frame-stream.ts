/**
 * What a client streaming a stack declares with each frame (Decision 61): the frame's number in
 * the finished stack (1-based, in the stack's own order: by time, else by file name) and how many
 * frames the stack will have. Both or neither; the upload that brings the stack to the declared
 * count starts its tracking. Shared by the upload route and the run page's uploader.
 */
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

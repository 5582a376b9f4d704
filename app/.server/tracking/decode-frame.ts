/**
 * Reading frames from disk with sharp: the header to check the size, then only the plan's crop
 * and channels, 8 bits each. Every failure names the frame (1-based, as a technician counts).
 */
import { readFile } from "node:fs/promises";
import path from "node:path";
import sharp, { type Metadata, type OutputInfo } from "sharp";
import type { DetectionPlan } from "../../lib/tracking/plan";
import { TrackingError } from "./errors";

export interface FrameSize {
  width: number;
  height: number;
}

function frameName(file: string, index: number): string {
  return `frame ${index + 1} (${path.basename(file)})`;
}

function unreadable(file: string, index: number, reason: string, cause?: unknown): TrackingError {
  return new TrackingError("unreadable-frame", `Unreadable ${frameName(file, index)}: ${reason}.`, {
    frameIndex: index,
    cause,
  });
}

/**
 * Whether the bytes stop before the format's end marker. Checked on the content, because libvips
 * keeps one error message for all threads: when frames decode side by side, a failure can reach
 * us as "Unknown error".
 */
function cutShort(bytes: Buffer): boolean {
  const tail = bytes.subarray(Math.max(0, bytes.length - 64));
  if (bytes[0] === 0xff && bytes[1] === 0xd8) return tail.indexOf(Buffer.from([0xff, 0xd9])) < 0;
  if (bytes.subarray(1, 4).toString("latin1") === "PNG") return tail.indexOf("IEND", 0, "latin1") < 0;
  return false;
}

/** JPEG, PNG, TIFF or WebP by their first bytes. */
function frameFormat(bytes: Buffer): boolean {
  const head = bytes.subarray(0, 12).toString("latin1");
  return (
    (bytes[0] === 0xff && bytes[1] === 0xd8) ||
    head.startsWith("\x89PNG") ||
    head.startsWith("II*\0") ||
    head.startsWith("MM\0*") ||
    (head.startsWith("RIFF") && head.slice(8, 12) === "WEBP")
  );
}

function reasonOf(error: unknown, bytes?: Buffer): string {
  const message = error instanceof Error ? error.message : String(error);
  if ((bytes && cutShort(bytes)) || /premature end|truncated/i.test(message)) return "the file is cut short (truncated)";
  if ((bytes && !frameFormat(bytes)) || /unsupported image format|bad seek|not a known file format/i.test(message)) {
    return "it is not a JPEG, PNG, TIFF or WebP image";
  }
  return message.split("\n")[0]!.replace(/\.$/, "");
}

async function readBytes(file: string, index: number): Promise<Buffer> {
  let bytes: Buffer;
  try {
    bytes = await readFile(file);
  } catch (error) {
    const code = (error as NodeJS.ErrnoException).code;
    throw unreadable(file, index, code === "ENOENT" ? "the file is missing" : reasonOf(error), error);
  }
  if (bytes.length === 0) throw unreadable(file, index, "the file is empty");
  return bytes;
}

/** Cut short files fail; the minor warnings some cameras' JPEGs carry do not. */
const sharpOptions = { failOn: "truncated" } as const;

export async function readFrameSize(file: string, index: number): Promise<FrameSize> {
  const bytes = await readBytes(file, index);
  try {
    const meta = await sharp(bytes, sharpOptions).metadata();
    if (!meta.width || !meta.height) throw new Error("it has no size");
    return { width: meta.width, height: meta.height };
  } catch (error) {
    throw unreadable(file, index, reasonOf(error, bytes), error);
  }
}

/**
 * The plan's crop of one frame: green channel for floats, RGB for dye, row-major bytes. With
 * `into` (at least the crop's size, e.g. a slot of shared memory that worker threads read) the
 * bytes are written there and a view of them returned; otherwise into a new array.
 */
export async function decodeFrame(file: string, index: number, plan: DetectionPlan, into?: Uint8Array): Promise<Uint8Array> {
  const bytes = await readBytes(file, index);
  // One instance for the header check and the decode, as sharp allows.
  const image = sharp(bytes, sharpOptions);
  let meta: Metadata;
  try {
    meta = await image.metadata();
  } catch (error) {
    throw unreadable(file, index, reasonOf(error, bytes), error);
  }
  if (meta.width !== plan.frameWidth || meta.height !== plan.frameHeight) {
    throw new TrackingError(
      "frame-size",
      `The ${frameName(file, index)} is ${meta.width}×${meta.height} px but the stack's first frame is ${plan.frameWidth}×${plan.frameHeight} px; all frames of a stack must be the same size.`,
      { frameIndex: index },
    );
  }
  const { left, top, width, height } = plan.crop;
  let pipeline = image.extract({ left, top, width, height });
  if (plan.channels === 1) {
    pipeline = pipeline.extractChannel((meta.channels ?? 3) >= 3 ? 1 : 0);
  } else {
    pipeline = pipeline.removeAlpha().toColourspace("srgb");
  }
  let data: Buffer;
  let info: OutputInfo;
  try {
    ({ data, info } = await pipeline.raw({ depth: "uchar" }).toBuffer({ resolveWithObject: true }));
  } catch (error) {
    throw unreadable(file, index, reasonOf(error, bytes), error);
  }
  if (info.width !== width || info.height !== height || info.channels !== plan.channels) {
    throw unreadable(file, index, `it decoded to ${info.width}×${info.height} px with ${info.channels} channels`);
  }
  if (into) {
    if (into.length < data.length) throw new Error(`A ${into.length}-byte buffer cannot take a ${data.length}-byte frame.`);
    into.set(data);
    return into.subarray(0, data.length);
  }
  // A copy of our own: it can be handed to a worker thread without touching sharp's memory.
  return new Uint8Array(data);
}

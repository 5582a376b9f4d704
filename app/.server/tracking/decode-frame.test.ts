import { mkdtemp, rm, writeFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import sharp from "sharp";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { planDetection } from "../../lib/tracking/plan";
import { decodeFrame } from "./decode-frame";

let dir: string;
let file: string;

beforeAll(async () => {
  dir = await mkdtemp(path.join(os.tmpdir(), "tankside-decode-"));
  file = path.join(dir, "frame.jpg");
  const pixels = Buffer.alloc(160 * 120 * 3);
  for (let i = 0; i < pixels.length; i++) pixels[i] = (i * 37) % 251;
  await writeFile(
    file,
    await sharp(pixels, { raw: { width: 160, height: 120, channels: 3 } })
      .jpeg({ quality: 90 })
      .toBuffer(),
  );
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe("decoding a frame into a buffer it is given", () => {
  for (const tracer of ["float", "dye"] as const) {
    it(`writes the same bytes as a decode into a new array (${tracer})`, async () => {
      const plan = planDetection({ tracer, centre: { x: 80, y: 60 }, tankEdge: { cx: 80, cy: 60, r: 50 }, mirrored: false }, 160, 120);
      const own = await decodeFrame(file, 0, plan);
      const slot = new Uint8Array(new SharedArrayBuffer(own.length + 16)).fill(7);
      const inSlot = await decodeFrame(file, 0, plan, slot);
      expect(inSlot.buffer).toBe(slot.buffer);
      expect(inSlot.length).toBe(own.length);
      expect(Buffer.from(inSlot).equals(Buffer.from(own))).toBe(true);
      // Bytes past the frame are left alone.
      expect(slot[own.length]).toBe(7);
      await expect(decodeFrame(file, 0, plan, new Uint8Array(own.length - 1))).rejects.toThrow(/cannot take/);
    });
  }
});

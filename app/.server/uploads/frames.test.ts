import { afterEach, beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import fs from "node:fs/promises";
import { Frame, Run } from "../db";
import { smallLab } from "../test-support";
import { createRun } from "../runs/service";
import { receiveFrameFile, UploadError } from "./frames";
import { runKey, store } from "../storage";
import { discardStaged, stageBytes, stagingDir } from "./staging";
import { zip } from "../../../tests/support/zip-writer";

async function png(w: number, h: number, shade: number) {
  return sharp({ create: { width: w, height: h, channels: 3, background: { r: shade, g: shade, b: shade } } }).png().toBuffer();
}
const file = (name: string, data: Buffer | Uint8Array) => new File([new Uint8Array(data)], name);

let lab: Awaited<ReturnType<typeof smallLab>>;
beforeAll(async () => {
  lab = await smallLab();
});

async function newRun() {
  return createRun(lab.runInput(), lab.tech);
}

// Every upload, taken or refused, leaves nothing behind in the staging folder.
afterEach(async () => {
  const left = await fs.readdir(stagingDir()).catch((err: NodeJS.ErrnoException) => (err.code === "ENOENT" ? [] : Promise.reject(err)));
  expect(left).toEqual([]);
});

describe("frame uploads are checked by content", () => {
  it("orders frames by natural sort of their names and ignores an identical file sent twice", async () => {
    const run = await newRun();
    for (const [i, name] of ["frame_10.png", "frame_2.png", "frame_1.png"].entries()) {
      await receiveFrameFile(run, file(name, await png(64, 48, 40 + i)), null);
    }
    const again = await receiveFrameFile(run, file("copy-of-frame_2.png", await png(64, 48, 41)), null);
    expect(again.accepted[0]!.duplicate).toBe(true);
    const frames = await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] });
    expect(frames.map((f) => f.originalName)).toEqual(["frame_1.png", "frame_2.png", "frame_10.png"]);
    await run.reload();
    expect(run.frameCount).toBe(3);
    expect(run.state).toBe("frames_in");
  });

  it("refuses a file that is not an image even when it is named like one", async () => {
    const run = await newRun();
    await expect(receiveFrameFile(run, file("frame_1.jpg", Buffer.from("this is plain text, not a JPEG")), null)).rejects.toMatchObject({ code: "not_an_image" });
  });

  it("refuses an empty file", async () => {
    const run = await newRun();
    await expect(receiveFrameFile(run, file("empty.png", Buffer.alloc(0)), null)).rejects.toThrow("The file is empty.");
  });

  it("refuses a truncated JPEG and keeps the frames already stored", async () => {
    const run = await newRun();
    await receiveFrameFile(run, file("frame_1.png", await png(64, 48, 10)), null);
    const jpeg = await sharp({ create: { width: 200, height: 150, channels: 3, background: "#345" } }).jpeg().toBuffer();
    const cut = jpeg.subarray(0, Math.floor(jpeg.length * 0.6));
    await expect(receiveFrameFile(run, file("frame_2.jpg", cut), null)).rejects.toMatchObject({ code: "damaged_image" });
    expect(await Frame.count({ where: { runId: run.id } })).toBe(1);
  });

  it("refuses a frame of another size than the stack", async () => {
    const run = await newRun();
    await receiveFrameFile(run, file("frame_1.png", await png(64, 48, 10)), null);
    await expect(receiveFrameFile(run, file("frame_2.png", await png(80, 48, 11)), null)).rejects.toThrow(/80 × 48 px but the stack's frames are 64 × 48 px/);
    expect(await Frame.count({ where: { runId: run.id } })).toBe(1);
  });

  it("refuses an image over the pixel limit without decoding it (decompression bomb)", async () => {
    const run = await newRun();
    // A 10 000 × 5 000 PNG of one colour compresses to a few kB but would unpack to 150 MB.
    const bomb = await sharp({ create: { width: 10_000, height: 5_000, channels: 3, background: "#000" } }).png({ compressionLevel: 9 }).toBuffer();
    expect(bomb.length).toBeLessThan(2_000_000);
    await expect(receiveFrameFile(run, file("huge.png", bomb), null)).rejects.toMatchObject({ code: "too_many_pixels" });
  });

  it("takes the frames of a ZIP in natural order and reports each refused entry on its own", async () => {
    const run = await newRun();
    const archive = zip([
      { name: "stack/frame_10.png", data: await png(32, 32, 30) },
      { name: "stack/frame_9.png", data: await png(32, 32, 31) },
      { name: "stack/notes.txt", data: Buffer.from("not a frame") },
    ]);
    const result = await receiveFrameFile(run, file("stack.zip", archive), null);
    expect(result.accepted.map((a) => a.name)).toEqual(["frame_9.png", "frame_10.png"]);
    expect(result.rejected).toHaveLength(1);
    expect(result.rejected[0]!.name).toContain("notes.txt");
    expect(result.frameCount).toBe(2);
  });

  it("refuses a ZIP whose entries climb out with ../ and takes nothing from it", async () => {
    const run = await newRun();
    const archive = zip([
      { name: "frame_1.png", data: await png(32, 32, 30) },
      { name: "../../etc/evil.png", data: await png(32, 32, 31) },
    ]);
    await expect(receiveFrameFile(run, file("evil.zip", archive), null)).rejects.toMatchObject({ code: "zip_unsafe_path" });
    expect(await Frame.count({ where: { runId: run.id } })).toBe(0);
  });

  it("refuses a ZIP that declares more than it may unpack to (a bomb)", async () => {
    const run = await newRun();
    const archive = zip([
      { name: "a.png", data: await png(32, 32, 30), declaredSize: 1_500_000_000, deflate: true },
      { name: "b.png", data: await png(32, 32, 31), declaredSize: 1_500_000_000, deflate: true },
    ]);
    await expect(receiveFrameFile(run, file("bomb.zip", archive), null)).rejects.toMatchObject({ code: "zip_too_large" });
  });

  it("stops inflating an entry that unpacks to more than a frame may be, whatever it declares", async () => {
    const run = await newRun();
    const zeros = Buffer.alloc(40 * 1024 * 1024);
    const honest = zip([{ name: "frame_1.png", data: zeros, deflate: true }]);
    expect(honest.length).toBeLessThan(200_000);
    const big = await receiveFrameFile(run, file("bomb.zip", honest), null);
    expect(big.accepted).toHaveLength(0);
    expect(big.rejected[0]!.message).toMatch(/unpacks to more than Tankside accepts/);
    const liar = zip([{ name: "frame_1.png", data: zeros, declaredSize: 1000, deflate: true }]);
    const lied = await receiveFrameFile(run, file("liar.zip", liar), null);
    expect(lied.rejected[0]!.message).toMatch(/does not match the size the ZIP declares/);
    expect(await Frame.count({ where: { runId: run.id } })).toBe(0);
  });

  it("keeps the time of frames cut from a video and orders by it", async () => {
    const run = await newRun();
    await receiveFrameFile(run, file("clip_00001.jpg", await png(32, 32, 21)), 0.04);
    await receiveFrameFile(run, file("clip_00000.jpg", await png(32, 32, 20)), 0);
    const frames = await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] });
    expect(frames.map((f) => f.timeS)).toEqual([0, 0.04]);
  });

  it("moves an accepted staged upload into the run's storage and checks a refused one from disk", async () => {
    const run = await newRun();
    const staged = await stageBytes("frame_1.png", await png(48, 32, 70));
    const result = await receiveFrameFile(run, staged, null);
    await expect(fs.stat(staged.path)).rejects.toMatchObject({ code: "ENOENT" });
    const frame = await Frame.findByPk(result.accepted[0]!.frameId);
    expect((await store().head(runKey(run.id, frame!.storedName)))?.size).toBe(staged.sizeBytes);
    const bad = await stageBytes("frame_2.png", Buffer.from("not an image at all"));
    await expect(receiveFrameFile(run, bad, null)).rejects.toMatchObject({ code: "not_an_image" });
    await discardStaged(bad);
  });

  it("is an UploadError a page can show", () => {
    expect(new UploadError("x", 415, "not_an_image")).toBeInstanceOf(Error);
    void Run;
  });
});

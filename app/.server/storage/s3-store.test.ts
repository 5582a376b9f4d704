import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fs from "node:fs/promises";
import path from "node:path";
import { CalibrationAttachment, Frame } from "../db";
import { smallLab } from "../test-support";
import { createRun } from "../runs/service";
import { ORPHAN_MIN_AGE_MS, removeOrphanUploads } from "../uploads/orphans";
import { stageBytes } from "../uploads/staging";
import { createBucket, startFakeS3, type FakeS3 } from "../../../tests/setup/fake-s3";
import { MissingObjectError, S3Store, ScratchDir, storageSettings } from "./index";

/** The S3 store against a real (fake) S3 server from npm, started here, with a bucket of its own. */
let s3: FakeS3;
let objects: S3Store;
beforeAll(async () => {
  process.env.AWS_ACCESS_KEY_ID = "S3RVER";
  process.env.AWS_SECRET_ACCESS_KEY = "S3RVER";
  s3 = await startFakeS3();
  objects = new S3Store({ bucket: await createBucket(s3), endpoint: s3.endpoint, region: "us-east-1", forcePathStyle: true });
});
afterAll(async () => {
  await s3?.close();
});

const text = async (body: NodeJS.ReadableStream) => {
  const chunks: Buffer[] = [];
  for await (const c of body) chunks.push(c as Buffer);
  return Buffer.concat(chunks).toString();
};

describe("the S3 store", () => {
  it("puts, reads back, heads, lists and deletes objects; a missing one is null, not an error", async () => {
    await objects.put("runs/1/a.png", Buffer.from("frame a"), "image/png");
    await objects.put("runs/1/b.thumb.webp", Buffer.from("thumb b"));
    await objects.put("runs/12/c.png", Buffer.from("another run"));
    expect((await objects.get("runs/1/a.png"))?.toString()).toBe("frame a");
    const opened = await objects.open("runs/1/b.thumb.webp");
    expect(opened?.size).toBe(7);
    expect(await text(opened!.body)).toBe("thumb b");
    expect(await objects.head("runs/1/a.png")).toMatchObject({ key: "runs/1/a.png", size: 7 });
    // "runs/1/" must not take in run 12's objects.
    expect((await objects.list("runs/1/")).map((o) => o.key).sort()).toEqual(["runs/1/a.png", "runs/1/b.thumb.webp"]);
    expect(await objects.get("runs/1/none.png")).toBeNull();
    expect(await objects.open("runs/1/none.png")).toBeNull();
    expect(await objects.head("runs/1/none.png")).toBeNull();
    await objects.delete("runs/1/a.png");
    await objects.delete("runs/1/a.png");
    expect(await objects.head("runs/1/a.png")).toBeNull();
  });

  it("lists past one page of 1000 keys", async () => {
    const names = Array.from({ length: 1005 }, (_, i) => `calibrations/p${String(i).padStart(4, "0")}.pdf`);
    for (let i = 0; i < names.length; i += 50) await Promise.all(names.slice(i, i + 50).map((k) => objects.put(k, Buffer.from("x"))));
    const listed = await objects.list("calibrations/");
    expect(listed).toHaveLength(1005);
    expect(new Set(listed.map((o) => o.key))).toEqual(new Set(names));
    for (let i = 0; i < names.length; i += 50) await Promise.all(names.slice(i, i + 50).map((k) => objects.delete(k)));
    // 2 010 requests to the fake server: they took past 30 s once while the rest of the suite ran.
  }, 120_000);

  it("takes a staged file by streaming it, and removes the staged copy", async () => {
    const bytes = Buffer.alloc(3 * 1024 * 1024 + 17, 9);
    const staged = await stageBytes("big.png", bytes);
    await objects.putFile("runs/2/big.png", staged.path, "image/png");
    await expect(fs.stat(staged.path)).rejects.toMatchObject({ code: "ENOENT" });
    expect((await objects.get("runs/2/big.png"))?.equals(bytes)).toBe(true);
  });

  it("downloads an object into a scratch folder for code that reads files, and the folder goes with dispose", async () => {
    await objects.put("runs/3/f.jpg", Buffer.from("jpeg bytes"));
    const scratch = new ScratchDir("test-job");
    const file = await objects.localPath("runs/3/f.jpg", scratch);
    expect(path.basename(file)).toBe("f.jpg");
    expect(file.startsWith(await scratch.path())).toBe(true);
    expect(await fs.readFile(file, "utf8")).toBe("jpeg bytes");
    await expect(objects.localPath("runs/3/gone.jpg", scratch)).rejects.toBeInstanceOf(MissingObjectError);
    const dir = await scratch.path();
    await scratch.dispose();
    await expect(fs.stat(dir)).rejects.toMatchObject({ code: "ENOENT" });
  });

  it("refuses keys that would climb out of their folder", async () => {
    await expect(objects.put("runs/../../etc/passwd", Buffer.from("x"))).rejects.toThrow(/bad object key/);
    await expect(objects.list("runs")).rejects.toThrow(/ends with \//);
  });
});

describe("orphan cleanup in a bucket", () => {
  it("removes old objects no row names under runs/<id>/ and calibrations/, keeps named ones and ones in flight", async () => {
    // A bucket of its own: the tests above leave objects no row names.
    const objects = new S3Store({ bucket: await createBucket(s3), endpoint: s3.endpoint, region: "us-east-1", forcePathStyle: true });
    const lab = await smallLab();
    const run = await createRun(lab.runInput(), lab.tech);
    const kept = `runs/${run.id}/11111111-1111-4111-8111-111111111111.png`;
    const keptThumb = kept.replace(".png", ".thumb.webp");
    await Frame.create({
      runId: run.id,
      position: 0,
      originalName: "f0.png",
      storedName: path.basename(kept),
      thumbName: path.basename(keptThumb),
      sha256: "1".repeat(64),
      format: "png",
      widthPx: 4,
      heightPx: 4,
      sizeBytes: 1,
      timeS: 0,
    });
    const attachment = await CalibrationAttachment.findOne();
    const orphan = `runs/${run.id}/22222222-2222-4222-8222-222222222222.png`;
    const orphanAttachment = "calibrations/44444444-4444-4444-8444-444444444444.pdf";
    const elsewhere = "other/55555555-5555-4555-8555-555555555555.png";
    for (const key of [kept, keptThumb, orphan, orphanAttachment, elsewhere]) await objects.put(key, Buffer.from("x"));
    expect(attachment).toBeNull();

    // Just written: an upload whose row may not be committed yet keeps its object.
    expect(await removeOrphanUploads(new Date(), objects)).toBe(0);
    expect(await objects.head(orphan)).not.toBeNull();
    // Once older than the limit, the unnamed ones go; named ones and other prefixes stay.
    const later = new Date(Date.now() + ORPHAN_MIN_AGE_MS + 60_000);
    expect(await removeOrphanUploads(later, objects)).toBe(2);
    expect(await objects.head(orphan)).toBeNull();
    expect(await objects.head(orphanAttachment)).toBeNull();
    expect(await objects.head(kept)).not.toBeNull();
    expect(await objects.head(keptThumb)).not.toBeNull();
    expect(await objects.head(elsewhere)).not.toBeNull();
    expect(await removeOrphanUploads(later, objects)).toBe(0);
  });
});

describe("storage settings", () => {
  it("keeps the local folder without S3_BUCKET and takes a bucket with it", () => {
    expect(storageSettings({}, "/srv/uploads")).toEqual({ kind: "local", root: "/srv/uploads" });
    expect(storageSettings({ S3_BUCKET: "lab-frames", S3_ENDPOINT: "http://127.0.0.1:9000", S3_FORCE_PATH_STYLE: "1" }, "/srv/uploads")).toEqual({
      kind: "s3",
      bucket: "lab-frames",
      endpoint: "http://127.0.0.1:9000",
      region: "us-east-1",
      forcePathStyle: true,
    });
    expect(storageSettings({ S3_BUCKET: "lab-frames", AWS_REGION: "eu-west-1" }, "/srv/uploads")).toMatchObject({
      region: "eu-west-1",
      endpoint: null,
      forcePathStyle: false,
    });
  });

  it("names the setting that cannot be right, in one line", () => {
    const problems = [
      [{ S3_ENDPOINT: "http://127.0.0.1:9000" }, /S3_ENDPOINT is set but S3_BUCKET is not/],
      [{ S3_BUCKET: "s3://lab-frames" }, /S3_BUCKET 's3:\/\/lab-frames' is not a bucket name/],
      [{ S3_BUCKET: "lab-frames", S3_ENDPOINT: "127.0.0.1:9000" }, /S3_ENDPOINT '127.0.0.1:9000' is not an http:\/\/ or https:\/\/ address/],
      [{ S3_BUCKET: "lab-frames", S3_FORCE_PATH_STYLE: "yes" }, /S3_FORCE_PATH_STYLE is 'yes'/],
    ] as const;
    for (const [vars, message] of problems) {
      const got = storageSettings(vars, "/srv/uploads");
      expect("problem" in got && got.problem).toMatch(message);
      expect("problem" in got && got.problem).toMatch(/^Tankside will not start: [^\n]+$/);
    }
  });
});

import { afterEach, describe, expect, it } from "vitest";
import fs from "node:fs/promises";
import { uploadLimits } from "~/lib/upload-limits";
import { stageMultipart, stagingDir, UploadError, withMultipartUpload, type MultipartOptions } from "./staging";

const KiB = 1024;
const MiB = 1024 * KiB;
const boundary = "----tankside-test-7f3a";

const options = (maxFileBytes: number): MultipartOptions => ({
  maxFileBytes,
  tooLarge: new UploadError("The upload is too large.", 413, "too_large"),
  unreadable: new UploadError("Not multipart.", 400, "invalid_multipart"),
});

/**
 * A multipart request whose body is a stream made on demand (so it goes chunked, with no length),
 * with a `timeS` field and a `file` part of `fileBytes` bytes of a repeating pattern.
 */
function streamedUpload(fileBytes: number, opts: { failAfter?: number; noEnd?: boolean } = {}) {
  const head = Buffer.from(
    `--${boundary}\r\nContent-Disposition: form-data; name="timeS"\r\n\r\n0.04\r\n` +
      `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="stack.zip"\r\nContent-Type: application/zip\r\n\r\n`,
  );
  const tail = Buffer.from(opts.noEnd ? "" : `\r\n--${boundary}--\r\n`);
  const block = Buffer.alloc(MiB);
  for (let i = 0; i < block.length; i++) block[i] = i % 251;
  const state = { pulled: 0 };
  let phase: "head" | "file" | "tail" = "head";
  let fileSent = 0;
  const body = new ReadableStream<Uint8Array>({
    pull(controller) {
      if (phase === "head") {
        phase = "file";
        state.pulled += head.length;
        return controller.enqueue(head);
      }
      if (phase === "file") {
        if (opts.failAfter !== undefined && fileSent >= opts.failAfter) return controller.error(Object.assign(new Error("aborted"), { code: "body_aborted" }));
        const n = Math.min(block.length, fileBytes - fileSent);
        if (n > 0) {
          fileSent += n;
          state.pulled += n;
          return controller.enqueue(block.subarray(0, n));
        }
        phase = "tail";
      }
      if (tail.length) controller.enqueue(tail);
      controller.close();
    },
  });
  const request = new Request("http://lab.tankside.example/api/v1/runs/1/frames", {
    method: "POST",
    headers: { "Content-Type": `multipart/form-data; boundary=${boundary}` },
    body,
    duplex: "half",
  } as RequestInit);
  return { request, state, block };
}

async function leftInStaging() {
  try {
    return await fs.readdir(stagingDir());
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === "ENOENT") return [];
    throw err;
  }
}

afterEach(async () => {
  expect(await leftInStaging()).toEqual([]);
});

describe("multipart uploads are staged on disk as they stream in", () => {
  it("writes the file part to a temporary file, keeps the fields, and removes the file afterwards", async () => {
    const { request, block } = streamedUpload(2 * MiB + 123);
    const seen = await withMultipartUpload(request, options(10 * MiB), async ({ file, fields }) => {
      expect(file).not.toBeNull();
      const bytes = await fs.readFile(file!.path);
      expect(await leftInStaging()).toHaveLength(1);
      return { name: file!.name, size: file!.sizeBytes, bytes, timeS: fields.timeS };
    });
    expect(seen).toMatchObject({ name: "stack.zip", size: 2 * MiB + 123, timeS: "0.04" });
    expect(seen.bytes.subarray(0, MiB).equals(block)).toBe(true);
    expect(seen.bytes.subarray(MiB, 2 * MiB).equals(block)).toBe(true);
  });

  it("removes the file when the checks that follow refuse it", async () => {
    const { request } = streamedUpload(64 * KiB);
    await expect(
      withMultipartUpload(request, options(MiB), async () => {
        throw new UploadError("This is not an image Tankside can read.", 415, "not_an_image");
      }),
    ).rejects.toMatchObject({ code: "not_an_image" });
  });

  it("refuses a chunked file over the frame upload limit as soon as it passes it", { timeout: 120_000 }, async () => {
    const { request, state } = streamedUpload(450 * 1000 * 1000);
    await expect(stageMultipart(request, options(uploadLimits.maxZipBytes))).rejects.toMatchObject({ status: 413, code: "too_large" });
    expect(state.pulled).toBeGreaterThan(uploadLimits.maxZipBytes);
    expect(state.pulled).toBeLessThan(uploadLimits.maxZipBytes + 4 * MiB);
  });

  it("removes the partial file when the client goes away mid-file", async () => {
    const { request } = streamedUpload(8 * MiB, { failAfter: 3 * MiB });
    await expect(stageMultipart(request, options(10 * MiB))).rejects.toMatchObject({ status: 400, code: "upload_aborted" });
  });

  it("takes a body the server cut off at its limit as too large", async () => {
    const body = new ReadableStream<Uint8Array>({
      start(controller) {
        controller.enqueue(new TextEncoder().encode(`--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="a.png"\r\n\r\nabc`));
        controller.error(Object.assign(new Error("Forms may be at most 64 KiB."), { code: "too_large" }));
      },
    });
    const request = new Request("http://x.example/", { method: "POST", headers: { "Content-Type": `multipart/form-data; boundary=${boundary}` }, body, duplex: "half" } as RequestInit);
    await expect(stageMultipart(request, options(MiB))).rejects.toMatchObject({ status: 413, code: "too_large" });
  });

  it("refuses a body that is not multipart, or ends without its closing boundary", async () => {
    const plain = new Request("http://x.example/", { method: "POST", headers: { "Content-Type": "text/plain" }, body: "hello" });
    await expect(stageMultipart(plain, options(MiB))).rejects.toMatchObject({ code: "invalid_multipart" });
    const { request } = streamedUpload(100 * KiB, { noEnd: true });
    await expect(stageMultipart(request, options(MiB))).rejects.toMatchObject({ code: "invalid_multipart" });
  });

  it("refuses more than one file part", async () => {
    const part = (n: number) => `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="f${n}.png"\r\n\r\nxyz\r\n`;
    const request = new Request("http://x.example/", {
      method: "POST",
      headers: { "Content-Type": `multipart/form-data; boundary=${boundary}` },
      body: `${part(1)}${part(2)}--${boundary}--\r\n`,
    });
    await expect(stageMultipart(request, options(MiB))).rejects.toMatchObject({ code: "invalid_multipart" });
  });
});

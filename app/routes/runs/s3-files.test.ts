import { afterAll, beforeAll, describe, expect, it } from "vitest";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import sharp from "sharp";
import { createElement } from "react";
import { renderToString } from "react-dom/server";
import { createRoutesStub } from "react-router";
import { DeleteObjectCommand, ListObjectsV2Command, S3Client } from "@aws-sdk/client-s3";
import { CalibrationAttachment, Equipment, Frame, TrackingJob } from "~/.server/db";
import { env } from "~/.server/env";
import { smallLab } from "~/.server/test-support";
import { floatStackViewSetup } from "~/.server/jobs/testing";
import { createRun } from "~/.server/runs/service";
import { createCalibration } from "~/.server/calibrations";
import { createApiToken } from "~/.server/auth/api-tokens";
import { sessionStorage } from "~/.server/auth/session";
import { receiveFrameFile } from "~/.server/uploads/frames";
import { enqueueTracking, stopTrackingQueue, whenTrackingIdle } from "~/.server/jobs/tracking-queue";
import { resetStore, store } from "~/.server/storage";
import { renderRunFrames } from "~/lib/tracking/synthetic";
import { floatStackSpec } from "~/lib/tracking/float-stack";
import { createBucket, s3Env, s3SettingNames, startFakeS3, type FakeS3 } from "../../../tests/setup/fake-s3";
import { action as framesAction } from "../api/run-frames";
import { action as attachAction } from "../api/calibration-attachments";
import { loader as attachmentLoader } from "../api/calibration-attachment";
import { loader as frameImageLoader } from "./frame-image";
import { loader as overlayLoader } from "./overlay";
import RunPage, { loader as runPageLoader } from "./run";

/**
 * Frames, thumbnails, overlays and calibration attachments kept in an S3 bucket (a fake S3 server
 * from npm, started here), uploaded and read back through the real route modules, with the same
 * permission checks as files on disk; a file gone from the bucket is a 404 and a note, never a 500.
 */
let s3: FakeS3;
let bucket: string;
let admin: S3Client;
let lab: Awaited<ReturnType<typeof smallLab>>;
let techToken: string;
let instructorToken: string;
const saved: Record<string, string | undefined> = {};

beforeAll(async () => {
  s3 = await startFakeS3();
  bucket = await createBucket(s3);
  for (const name of s3SettingNames) saved[name] = process.env[name];
  Object.assign(process.env, s3Env(s3, bucket));
  resetStore();
  admin = new S3Client({ endpoint: s3.endpoint, region: "us-east-1", forcePathStyle: true, credentials: { accessKeyId: "S3RVER", secretAccessKey: "S3RVER" } });
  lab = await smallLab();
  techToken = (await createApiToken(lab.tech.id, "s3 test")).token;
  instructorToken = (await createApiToken(lab.instructor.id, "s3 test")).token;
});
afterAll(async () => {
  await stopTrackingQueue();
  for (const name of s3SettingNames) {
    if (saved[name] === undefined) delete process.env[name];
    else process.env[name] = saved[name];
  }
  resetStore();
  admin?.destroy();
  await s3?.close();
});

/** Calls a route function as React Router does; anything thrown that is not a Response or data() is the server's 500. */
async function call(
  fn: (args: never) => unknown,
  request: Request,
  params: Record<string, string> = {},
): Promise<{ status: number; response: Response | null; data: unknown }> {
  let answer: unknown;
  try {
    answer = await fn({ request, params, context: {} } as never);
  } catch (thrown) {
    answer = thrown;
  }
  if (answer instanceof Response) return { status: answer.status, response: answer, data: null };
  if (answer && typeof answer === "object" && (answer as { type?: string }).type === "DataWithResponseInit") {
    const d = answer as { data: unknown; init: { status?: number } | null };
    return { status: d.init?.status ?? 200, response: null, data: d.data };
  }
  if (answer instanceof Error) return { status: 500, response: null, data: answer.message };
  return { status: 200, response: null, data: answer };
}

async function cookieFor(userId: number) {
  const session = await sessionStorage.getSession();
  session.set("userId", userId);
  return (await sessionStorage.commitSession(session)).split(";")[0]!;
}
const page = async (url: string, userId?: number) => new Request(`http://localhost${url}`, { headers: userId ? { Cookie: await cookieFor(userId) } : {} });
const bearer = (url: string, token: string, init: RequestInit = {}) =>
  new Request(`http://localhost${url}`, { ...init, headers: { Authorization: `Bearer ${token}`, ...(init.headers ?? {}) } });

function uploadFrame(runId: number, name: string, data: Buffer) {
  const form = new FormData();
  form.set("file", new File([new Uint8Array(data)], name));
  return bearer(`/api/v1/runs/${runId}/frames`, techToken, { method: "POST", body: form });
}

async function bucketKeys(prefix: string) {
  const out = await admin.send(new ListObjectsV2Command({ Bucket: bucket, Prefix: prefix }));
  return (out.Contents ?? []).map((o) => o.Key!).sort();
}
const bytesOf = async (r: Response) => Buffer.from(await r.arrayBuffer());
const localRunDir = (runId: number) => path.join(env.uploadsDir, "runs", String(runId));
const exists = (p: string) =>
  fs.stat(p).then(
    () => true,
    () => false,
  );
const png = (shade: number) =>
  sharp({ create: { width: 64, height: 48, channels: 3, background: { r: shade, g: 90, b: 120 } } })
    .png()
    .toBuffer();

describe("frames in an S3 bucket", () => {
  it("are uploaded through the API into the bucket, not the local folder, and read back through the frame route", async () => {
    expect(store().kind).toBe("s3");
    const run = await createRun(lab.runInput(), lab.tech);
    const sent = await png(10);
    const up = await call(framesAction, uploadFrame(run.id, "frame_1.png", sent), { runId: String(run.id) });
    expect(up.status).toBe(201);
    const frame = (await Frame.findOne({ where: { runId: run.id } }))!;
    expect(await bucketKeys(`runs/${run.id}/`)).toEqual([`runs/${run.id}/${frame.storedName}`, `runs/${run.id}/${frame.thumbName}`].sort());
    expect(await exists(localRunDir(run.id))).toBe(false);

    const image = await call(frameImageLoader, await page(`/runs/${run.id}/frames/${frame.id}/image`, lab.instructor.id), {
      id: String(run.id),
      frameId: String(frame.id),
    });
    expect(image.status).toBe(200);
    expect(image.response!.headers.get("Content-Type")).toBe("image/png");
    expect(image.response!.headers.get("Content-Length")).toBe(String(sent.length));
    expect((await bytesOf(image.response!)).equals(sent)).toBe(true);

    const thumb = await call(frameImageLoader, await page(`/runs/${run.id}/frames/${frame.id}/image?size=thumb`, lab.tech.id), {
      id: String(run.id),
      frameId: String(frame.id),
    });
    expect(thumb.status).toBe(200);
    expect(thumb.response!.headers.get("Content-Type")).toBe("image/webp");
    expect(await sharp(await bytesOf(thumb.response!)).metadata()).toMatchObject({ format: "webp", width: 64, height: 48 });

    // HEAD only looks the object up.
    const headRequest = new Request(`http://localhost/runs/${run.id}/frames/${frame.id}/image`, {
      method: "HEAD",
      headers: { Cookie: (await page("/", lab.tech.id)).headers.get("Cookie")! },
    });
    const head = await call(frameImageLoader, headRequest, { id: String(run.id), frameId: String(frame.id) });
    expect(head.status).toBe(200);
    expect(head.response!.headers.get("Content-Length")).toBe(String(sent.length));
    expect(head.response!.body).toBeNull();

    // Nobody signed in: sent to sign in, as for files on disk; the bucket is never shown.
    const anonymous = await call(frameImageLoader, await page(`/runs/${run.id}/frames/${frame.id}/image`), { id: String(run.id), frameId: String(frame.id) });
    expect(anonymous.status).toBe(302);
    expect(anonymous.response!.headers.get("Location")).toMatch(/^\/sign-in/);
  });

  it("a frame gone from the bucket is a 404 naming it, a note on the run page, and bringing it again puts it back", async () => {
    const run = await createRun(lab.runInput(), lab.tech);
    const first = await png(20);
    for (const [i, data] of [first, await png(21), await png(22)].entries()) {
      expect((await call(framesAction, uploadFrame(run.id, `frame_${i + 1}.png`, data), { runId: String(run.id) })).status).toBe(201);
    }
    const frame = (await Frame.findOne({ where: { runId: run.id, position: 0 } }))!;
    await admin.send(new DeleteObjectCommand({ Bucket: bucket, Key: `runs/${run.id}/${frame.storedName}` }));

    const image = await call(frameImageLoader, await page(`/runs/${run.id}/frames/${frame.id}/image`, lab.tech.id), {
      id: String(run.id),
      frameId: String(frame.id),
    });
    expect(image.status).toBe(404);
    expect(await image.response!.json()).toEqual({
      error: { code: "file_missing", message: "The file of frame 1 (frame_1.png) is missing from storage. Bring the same frame again to put it back." },
    });
    // Its thumbnail is still there and still served.
    expect(
      (
        await call(frameImageLoader, await page(`/runs/${run.id}/frames/${frame.id}/image?size=thumb`, lab.tech.id), {
          id: String(run.id),
          frameId: String(frame.id),
        })
      ).status,
    ).toBe(200);

    const loaded = await call(runPageLoader, await page(`/runs/${run.id}`, lab.tech.id), { id: String(run.id) });
    expect(loaded.status).toBe(200);
    const data = loaded.data as Awaited<ReturnType<typeof runPageLoader>>;
    expect(data.frameFiles).toEqual({ missing: 1, unavailable: false });
    expect(data.frames.map((f) => f.missing)).toEqual([true, false, false]);
    const Stub = createRoutesStub([{ path: "/runs/:id", Component: RunPage as never, loader: () => data }]);
    const html = renderToString(createElement(Stub, { initialEntries: [`/runs/${run.id}`], hydrationData: { loaderData: { "0": data } } }));
    expect(html).toContain("1 of 3 frames are missing from storage");
    expect(html).toContain("Frame 1 missing");

    const again = await call(framesAction, uploadFrame(run.id, "frame_1.png", first), { runId: String(run.id) });
    expect(again.status).toBe(200);
    expect((await again.response!.json()).accepted).toEqual([{ name: "frame_1.png", frameId: frame.id, position: 0, duplicate: true, restored: true }]);
    const back = await call(frameImageLoader, await page(`/runs/${run.id}/frames/${frame.id}/image`, lab.tech.id), {
      id: String(run.id),
      frameId: String(frame.id),
    });
    expect(back.status).toBe(200);
    expect((await bytesOf(back.response!)).equals(first)).toBe(true);
    const reloaded = (await call(runPageLoader, await page(`/runs/${run.id}`, lab.tech.id), { id: String(run.id) })).data as Awaited<
      ReturnType<typeof runPageLoader>
    >;
    expect(reloaded.frameFiles.missing).toBe(0);
  });
});

// The rendered float stack the queue tests track (lib/tracking/float-stack.ts).
const { width: W, height: H } = floatStackSpec(1);

async function trackableRun(frames: number) {
  const run = await createRun(lab.runInput({ setRateRpm: 15 }), lab.tech);
  await renderRunFrames(floatStackSpec(frames), async (f) => {
    const jpeg = await sharp(Buffer.from(f.data), { raw: { width: f.width, height: f.height, channels: 3 } })
      .jpeg({ quality: 92 })
      .toBuffer();
    await receiveFrameFile(run, new File([new Uint8Array(jpeg)], `frame_${f.index}.jpg`), null);
  });
  await floatStackViewSetup(run, lab.tech.id);
  return await run.reload();
}

async function scratchFoldersOf(job: TrackingJob) {
  return (await fs.readdir(os.tmpdir())).filter((n) => n.startsWith(`tankside-tracking-job-${job.id}-`));
}

describe("tracking frames kept in a bucket", () => {
  it("downloads the stack to a scratch folder, tracks it, removes the folder, and draws the overlay into the bucket", async () => {
    const run = await trackableRun(45);
    expect(await exists(localRunDir(run.id))).toBe(false);
    const job = await enqueueTracking(run, lab.tech.id);
    await whenTrackingIdle();
    await job.reload();
    expect(job.error).toBeNull();
    expect(job.state).toBe("done");
    expect(job.framesDone).toBe(45);
    expect(await scratchFoldersOf(job)).toEqual([]);

    const overlay = await call(overlayLoader, await page(`/runs/${run.id}/overlay.png`, lab.instructor.id), { id: String(run.id) });
    expect(overlay.status).toBe(200);
    const drawn = await bytesOf(overlay.response!);
    expect(await sharp(drawn).metadata()).toMatchObject({ format: "png", width: W, height: H });
    expect(await bucketKeys(`runs/${run.id}/overlay-`)).toEqual([`runs/${run.id}/overlay-${job.id}.png`]);
    const cached = await call(overlayLoader, await page(`/runs/${run.id}/overlay.png`, lab.tech.id), { id: String(run.id) });
    expect((await bytesOf(cached.response!)).equals(drawn)).toBe(true);

    // The middle frame gone from the bucket: the overlay (made anew) cannot be drawn, and says so.
    await admin.send(new DeleteObjectCommand({ Bucket: bucket, Key: `runs/${run.id}/overlay-${job.id}.png` }));
    const middle = (await Frame.findOne({ where: { runId: run.id, position: 22 } }))!;
    await admin.send(new DeleteObjectCommand({ Bucket: bucket, Key: `runs/${run.id}/${middle.storedName}` }));
    const noOverlay = await call(overlayLoader, await page(`/runs/${run.id}/overlay.png`, lab.tech.id), { id: String(run.id) });
    expect(noOverlay.status).toBe(404);
    expect(((await noOverlay.response!.json()) as { error: { code: string } }).error.code).toBe("file_missing");

    // Tracking again with that frame missing fails with a reason in words, and leaves no scratch folder.
    const retry = await enqueueTracking(run, lab.tech.id);
    await whenTrackingIdle();
    await retry.reload();
    expect(retry.state).toBe("failed");
    expect(retry.error).toBe("The file of frame 23 (frame_22.jpg) is missing from storage. Bring the same frames again to put it back, then track again.");
    expect(await scratchFoldersOf(retry)).toEqual([]);
  });
});

describe("calibration attachments in a bucket", () => {
  it("are stored in the bucket and read back through the API by those who may read calibrations; a missing file is a 404", async () => {
    const meter = await Equipment.create({ kind: "rate_meter", name: "S3 test tachometer", meterType: "tachometer" } as never);
    const cal = await createCalibration(
      {
        kind: "rate",
        equipmentId: lab.table.id,
        meterId: meter.id,
        performedOn: new Date().toISOString().slice(0, 10),
        readings: [5, 10, 15].map((s) => ({ setRpm: s, measuredRpm: s })),
      },
      lab.tech,
    );
    const pdf = Buffer.from("%PDF-1.4\n1 0 obj << >> endobj\ntrailer << >>\n%%EOF\n");
    const form = new FormData();
    form.set("file", new File([new Uint8Array(pdf)], "certificate.pdf"));
    const up = await call(attachAction, bearer(`/api/v1/calibrations/${cal.id}/attachments`, techToken, { method: "POST", body: form }), {
      id: String(cal.id),
    });
    expect(up.status).toBe(201);
    const row = (await CalibrationAttachment.findOne({ where: { calibrationId: cal.id } }))!;
    expect(await bucketKeys("calibrations/")).toContain(`calibrations/${row.storedName}`);
    expect(await exists(path.join(env.uploadsDir, "calibrations", row.storedName))).toBe(false);

    const url = `/api/v1/calibrations/${cal.id}/attachments/${row.id}`;
    const params = { id: String(cal.id), attachmentId: String(row.id) };
    const read = await call(attachmentLoader, bearer(url, instructorToken), params);
    expect(read.status).toBe(200);
    expect(read.response!.headers.get("Content-Type")).toBe("application/pdf");
    expect((await bytesOf(read.response!)).equals(pdf)).toBe(true);
    const anonymous = await call(attachmentLoader, new Request(`http://localhost${url}`), params);
    expect(anonymous.status).toBe(401);

    await admin.send(new DeleteObjectCommand({ Bucket: bucket, Key: `calibrations/${row.storedName}` }));
    const gone = await call(attachmentLoader, bearer(url, instructorToken), params);
    expect(gone.status).toBe(404);
    expect(await gone.response!.json()).toEqual({
      error: { code: "file_missing", message: 'The file of attachment "certificate.pdf" is missing from storage. Attach it to the record again.' },
    });
  });
});

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import { callApi } from "../../../tests/support/api-contract";
import { zip } from "../../../tests/support/zip-writer";
import { Frame, migrate } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import { stopTrackingQueue, whenTrackingIdle } from "~/.server/jobs/tracking-queue";
import { createRun } from "~/.server/runs/service";
import { whenRechecksIdle } from "~/.server/runs/rechecks";
import { runInput, seedRunLab, type RunLab } from "~/.server/runs/testing";
import { maxUploadBodyBytes } from "~/lib/upload-limits";
import { action as framesAction } from "./run-frames";

let lab: RunLab;
let techToken: string;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
  techToken = (await createApiToken(lab.technician.id, "script")).token;
});
afterAll(async () => {
  await whenRechecksIdle();
  await whenTrackingIdle();
  await stopTrackingQueue();
});

const png = (shade: number) =>
  sharp({ create: { width: 32, height: 24, channels: 3, background: { r: shade * 30, g: 20, b: 70 } } })
    .png()
    .toBuffer();

/** A multipart body with the file, and its Content-Type (boundary included). */
async function multipart(name: string, data: Buffer) {
  const form = new FormData();
  form.set("file", new File([new Uint8Array(data)], name));
  const encoded = new Response(form);
  return { contentType: encoded.headers.get("Content-Type")!, bytes: new Uint8Array(await encoded.arrayBuffer()) };
}

/**
 * An upload whose body counts what the route pulls from it, declaring `declaredLength` as its
 * Content-Length whatever it really carries (a client may declare a length and then send less).
 */
function upload(runId: number, query: string, body: { contentType: string; bytes: Uint8Array }, declaredLength: number) {
  const counter = { pulled: 0 };
  let sent = false;
  const stream = new ReadableStream<Uint8Array>(
    {
      pull(controller) {
        counter.pulled += 1;
        if (sent) return controller.close();
        sent = true;
        controller.enqueue(body.bytes);
      },
      // Nothing is pulled ahead: a pull is a read by whoever holds the request.
    },
    { highWaterMark: 0 },
  );
  const request = new Request(`http://localhost/api/v1/runs/${runId}/frames${query}`, {
    method: "POST",
    headers: { Authorization: `Bearer ${techToken}`, "Content-Type": body.contentType, "Content-Length": String(declaredLength) },
    body: stream,
    duplex: "half",
  } as RequestInit);
  return { request, counter };
}

const frameCount = (runId: number) => Frame.count({ where: { runId } });

describe("POST /api/v1/runs/:runId/frames: the early refusal by declared length", () => {
  it("refuses one frame declared over the frame limit with 413 before reading a byte of it, and saves nothing", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    const body = await multipart("frame_1.png", await png(1));
    // The limit is a file of 30 MiB plus 64 KiB of multipart framing.
    const atLimit = maxUploadBodyBytes("frame");
    expect(atLimit).toBe(30 * 1024 * 1024 + 64 * 1024);
    const { request, counter } = upload(run.id, "", body, atLimit + 1);
    const res = await callApi(framesAction, request, { runId: String(run.id) });
    expect(res.status).toBe(413);
    const answer = (await res.json()) as { error: { code: string; message: string } };
    expect(answer.error.code).toBe("too_large");
    expect(answer.error.message).toContain("kind=zip");
    expect(counter.pulled).toBe(0);
    expect(request.bodyUsed).toBe(false);
    expect(await frameCount(run.id)).toBe(0);

    // Said outright as one frame: the same.
    const named = upload(run.id, "?kind=frame", body, atLimit + 1);
    expect((await callApi(framesAction, named.request, { runId: String(run.id) })).status).toBe(413);
    expect(named.counter.pulled).toBe(0);
    expect(await frameCount(run.id)).toBe(0);
  });

  it("lets a ZIP declared at the same length through the early check, reads it and takes its frames", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    const archive = zip([
      { name: "frame_1.png", data: await png(1) },
      { name: "frame_2.png", data: await png(2) },
    ]);
    const body = await multipart("stack.zip", archive);
    const { request, counter } = upload(run.id, "?kind=zip", body, maxUploadBodyBytes("frame") + 1);
    const res = await callApi(framesAction, request, { runId: String(run.id) });
    expect(res.status).toBe(201);
    expect(counter.pulled).toBeGreaterThan(0);
    expect(await frameCount(run.id)).toBe(2);
  });

  it("refuses a ZIP declared over the ZIP limit unread, and a kind it does not know with 400", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    const body = await multipart("stack.zip", zip([{ name: "frame_1.png", data: await png(1) }]));
    const over = upload(run.id, "?kind=zip", body, maxUploadBodyBytes("zip") + 1);
    const res = await callApi(framesAction, over.request, { runId: String(run.id) });
    expect(res.status).toBe(413);
    expect(over.counter.pulled).toBe(0);

    const unknown = upload(run.id, "?kind=video", body, body.bytes.length);
    const refused = await callApi(framesAction, unknown.request, { runId: String(run.id) });
    expect(refused.status).toBe(400);
    expect(((await refused.json()) as { error: { code: string; message: string } }).error).toMatchObject({ code: "invalid_input" });
    expect(unknown.counter.pulled).toBe(0);
    const twice = upload(run.id, "?kind=zip&kind=zip", body, body.bytes.length);
    expect((await callApi(framesAction, twice.request, { runId: String(run.id) })).status).toBe(400);
    expect(await frameCount(run.id)).toBe(0);
  });
});

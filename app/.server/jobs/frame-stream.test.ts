import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import sharp from "sharp";
import { callApi } from "../../../tests/support/api-contract";
import { Frame, StreamedDetection, TheoryCheck, TrackingJob, type Run } from "../db";
import { createApiToken } from "../auth/api-tokens";
import { smallLab } from "../test-support";
import { createRun } from "../runs/service";
import { whenRechecksIdle } from "../runs/rechecks";
import { receiveFrameFile } from "../uploads/frames";
import { floatStackViewSetup, renderStack, tracksOf } from "./testing";
import { enqueueTracking, stopTrackingQueue, whenTrackingIdle } from "./tracking-queue";
import { settleFrameStream } from "./frame-stream";
import { action as framesAction } from "~/routes/api/run-frames";
import { action as trackingAction } from "~/routes/api/run-tracking";
import { streamingOrder } from "~/lib/frame-stream";
import { backgroundSampleIndices } from "~/lib/tracking/background";

/**
 * Tracking while the frames arrive (Decision 61): frames sent through the API with their place in
 * the stack are searched as they land, the last one starts the fit, and whatever happens to the
 * stack meanwhile, the tracks are those of tracking the finished stack from scratch.
 */
const FRAMES = 45;
let lab: Awaited<ReturnType<typeof smallLab>>;
let token: string;
let stack: File[];
let scratchTracks: Awaited<ReturnType<typeof tracksOf>>;
let scratchRate: Record<string, unknown>;
const rateColumns = (job: TrackingJob | null) =>
  job && { omega: job.measuredOmega, se: job.measuredOmegaSe, method: job.measuredOmegaMethod, points: job.measuredOmegaPoints, note: job.measuredOmegaNote };

beforeAll(async () => {
  lab = await smallLab();
  token = (await createApiToken(lab.tech.id, "stream")).token;
  stack = await renderStack(FRAMES);
  // The same frames tracked the way they always were: all in, then tracking from scratch.
  const run = await createRun(lab.runInput({ setRateRpm: 15 }), lab.tech);
  for (const file of stack) await receiveFrameFile(run, file, null);
  await floatStackViewSetup(run, lab.tech.id);
  await enqueueTracking(run, lab.tech.id);
  await whenTrackingIdle();
  scratchTracks = await tracksOf(run.id);
  scratchRate = rateColumns(await TrackingJob.findOne({ where: { runId: run.id } }))!;
}, 120_000);

afterAll(async () => {
  await whenRechecksIdle();
  await whenTrackingIdle();
  await stopTrackingQueue();
});

function upload(run: Run, file: File, fields: Record<string, string> = {}) {
  const form = new FormData();
  form.set("file", file);
  for (const [k, v] of Object.entries(fields)) form.set(k, v);
  return callApi(
    framesAction,
    new Request(`http://localhost/api/v1/runs/${run.id}/frames`, { method: "POST", headers: { Authorization: `Bearer ${token}` }, body: form }),
    {
      runId: String(run.id),
    },
  );
}

const declared = (index: number, count = FRAMES) => ({ frameNumber: String(index + 1), expectedFrames: String(count) });

async function streamingRun() {
  const run = await createRun(lab.runInput({ setRateRpm: 15 }), lab.tech);
  // The view is set before the frames come (as when it is carried over from the camera's last run).
  await floatStackViewSetup(run, lab.tech.id);
  return run;
}

/** A frame with the same name and size as frame `index` but other content: the float is not where it should be. */
async function wrongFrame(index: number) {
  const bytes = Buffer.from(await stack[(index + 20) % FRAMES]!.arrayBuffer());
  const jpeg = await sharp(bytes).modulate({ brightness: 1.02 }).jpeg({ quality: 91 }).toBuffer();
  return new File([new Uint8Array(jpeg)], stack[index]!.name);
}

async function removeFrameWithContent(run: Run, sha256: string) {
  const frame = await Frame.findOne({ where: { runId: run.id, sha256 } });
  const res = await callApi(
    framesAction,
    new Request(`http://localhost/api/v1/runs/${run.id}/frames`, {
      method: "DELETE",
      headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" },
      body: JSON.stringify({ from: frame!.position, to: frame!.position }),
    }),
    { runId: String(run.id) },
  );
  expect(res.status).toBe(200);
}

/** How many of the stack's frames the job took from the stream, from its log line. */
function searchedAsTheyArrived(log: { mock: { calls: unknown[][] } }, run: Run) {
  const line = log.mock.calls.map((c) => String(c[0])).find((l: string) => l.includes(`run ${run.id}: `) && l.includes("searched as they arrived"));
  const m = line ? /: (\d+) of (\d+) frames/.exec(line) : null;
  return m ? Number(m[1]) : 0;
}

describe("tracking while the frames arrive", () => {
  it("searches every frame as it lands, fits when the last is in, and leaves the tracks of tracking from scratch", async () => {
    const log = vi.spyOn(console, "log");
    const run = await streamingRun();
    for (const i of streamingOrder(FRAMES)) {
      const res = await upload(run, stack[i]!, declared(i));
      expect(res.status).toBe(201);
    }
    // The last upload started the job: no call to the tracking route was made.
    await whenTrackingIdle();
    const job = await TrackingJob.findOne({ where: { runId: run.id } });
    expect(job?.state).toBe("done");
    expect(await StreamedDetection.count({ where: { runId: run.id } })).toBe(FRAMES);
    expect(searchedAsTheyArrived(log, run)).toBe(FRAMES);
    expect(await TheoryCheck.count({ where: { runId: run.id } })).toBe(1);
    expect(await tracksOf(run.id)).toEqual(scratchTracks);
    // The table's rate was read as the frames came, and is what the job's own pass reads.
    expect(log.mock.calls.some((c) => String(c[0]) === `[tracking] run ${run.id}: the rate read as the frames arrived is used`)).toBe(true);
    expect(rateColumns(job)).toEqual(scratchRate);
    log.mockRestore();
  }, 120_000);

  it("a frame replaced while streaming (not one the background is made of) is searched again; the tracks are those from scratch", async () => {
    const log = vi.spyOn(console, "log");
    const run = await streamingRun();
    const replaced = 10;
    expect(backgroundSampleIndices(FRAMES)).not.toContain(replaced);
    const wrong = await wrongFrame(replaced);
    let wrongSha = "";
    for (const i of streamingOrder(FRAMES)) {
      if (i === replaced) {
        const res = await upload(run, wrong, declared(i));
        expect(res.status).toBe(201);
        const body = (await res.json()) as { accepted: { frameId: number }[] };
        const frame = await Frame.findByPk(body.accepted[0]!.frameId);
        wrongSha = frame!.sha256;
        await removeFrameWithContent(run, frame!.sha256);
      }
      expect((await upload(run, stack[i]!, declared(i))).status).toBe(201);
    }
    await whenTrackingIdle();
    expect(await tracksOf(run.id)).toEqual(scratchTracks);
    // Every frame of the finished stack came from the stream; the wrong one was searched too, and left out.
    expect(searchedAsTheyArrived(log, run)).toBe(FRAMES);
    // Its stored detections went with the job: only the finished stack's frames keep theirs.
    const kept = await StreamedDetection.findAll({ where: { runId: run.id }, attributes: ["sha256"] });
    expect(kept).toHaveLength(FRAMES);
    expect(kept.map((r) => r.sha256)).not.toContain(wrongSha);
    log.mockRestore();
  }, 120_000);

  it("a frame of the background replaced while streaming makes the job search the stack afresh; the tracks are those from scratch", async () => {
    const log = vi.spyOn(console, "log");
    const run = await streamingRun();
    const replaced = backgroundSampleIndices(FRAMES)[5]!;
    const wrong = await wrongFrame(replaced);
    const order = streamingOrder(FRAMES);
    let wrongId = 0;
    for (const [k, i] of order.entries()) {
      // The wrong frame is taken out once the stream has built its background with it, and the right one comes last.
      if (k === 30) await removeFrameWithContent(run, (await Frame.findByPk(wrongId))!.sha256);
      if (i === replaced) {
        const res = await upload(run, wrong, declared(i));
        wrongId = ((await res.json()) as { accepted: { frameId: number }[] }).accepted[0]!.frameId;
        continue;
      }
      expect((await upload(run, stack[i]!, declared(i))).status).toBe(201);
    }
    expect(await TrackingJob.count({ where: { runId: run.id } })).toBe(0);
    expect((await upload(run, stack[replaced]!, declared(replaced))).status).toBe(201);
    await whenTrackingIdle();
    expect(await tracksOf(run.id)).toEqual(scratchTracks);
    // The background the stream searched on is not the finished stack's: nothing of it was used,
    // and nothing of it is kept once the job is done.
    expect(searchedAsTheyArrived(log, run)).toBe(0);
    expect(await StreamedDetection.count({ where: { runId: run.id } })).toBe(0);
    log.mockRestore();
  }, 120_000);

  it("a frame deleted while streaming: the client starts tracking itself, and the tracks are those of the shorter stack from scratch", async () => {
    const dropped = 30;
    const shorter = stack.filter((_, i) => i !== dropped);
    const reference = await createRun(lab.runInput({ setRateRpm: 15 }), lab.tech);
    for (const file of shorter) await receiveFrameFile(reference, file, null);
    await floatStackViewSetup(reference, lab.tech.id);
    await enqueueTracking(reference, lab.tech.id);
    await whenTrackingIdle();

    const run = await streamingRun();
    for (const i of streamingOrder(FRAMES)) {
      const res = await upload(run, stack[i]!, declared(i));
      if (i === dropped)
        await removeFrameWithContent(run, (await Frame.findByPk(((await res.json()) as { accepted: { frameId: number }[] }).accepted[0]!.frameId))!.sha256);
    }
    // 44 of the 45 declared frames: nothing starts by itself.
    await whenTrackingIdle();
    expect(await TrackingJob.count({ where: { runId: run.id } })).toBe(0);
    const start = await callApi(
      trackingAction,
      new Request(`http://localhost/api/v1/runs/${run.id}/tracking`, { method: "POST", headers: { Authorization: `Bearer ${token}` } }),
      {
        runId: String(run.id),
      },
    );
    expect(start.status).toBe(202);
    await whenTrackingIdle();
    expect(await tracksOf(run.id)).toEqual(await tracksOf(reference.id));
  }, 180_000);

  it("a stream lost with a restart leaves what it stored; the job searches the rest, and the tracks are those from scratch", async () => {
    const log = vi.spyOn(console, "log");
    const run = await streamingRun();
    const order = streamingOrder(FRAMES);
    for (const i of order.slice(0, 30)) await upload(run, stack[i]!, declared(i));
    // What a restart leaves: the detections stored so far, and no stream in memory.
    await settleFrameStream(run.id);
    expect(await StreamedDetection.count({ where: { runId: run.id } })).toBe(30);
    for (const i of order.slice(30)) await upload(run, stack[i]!, declared(i));
    await whenTrackingIdle();
    expect(searchedAsTheyArrived(log, run)).toBe(30);
    expect(await tracksOf(run.id)).toEqual(scratchTracks);
    log.mockRestore();
  }, 120_000);

  it("refuses half a declaration or a frame number beyond the declared count with 400 invalid_stream", async () => {
    const run = await streamingRun();
    for (const fields of <Record<string, string>[]>[
      { frameNumber: "1" },
      { frameNumber: "46", expectedFrames: "45" },
      { frameNumber: "1", expectedFrames: "2" },
      { frameNumber: "x", expectedFrames: "45" },
    ]) {
      const res = await upload(run, stack[0]!, fields);
      expect(res.status).toBe(400);
      expect(((await res.json()) as { error: { code: string } }).error.code).toBe("invalid_stream");
    }
    expect(await Frame.count({ where: { runId: run.id } })).toBe(0);
  });
});

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Frame, Run, RunHistory, TheoryCheck, TrackingJob, ViewSetup } from "../db";
import { smallLab } from "../test-support";
import { prepareRun, renderStack } from "../jobs/testing";
import { enqueueTracking, stopTrackingQueue, whenTrackingIdle } from "../jobs/tracking-queue";
import { createApiToken } from "../auth/api-tokens";
import { frameKey, frameThumbKey, runPrefix, store } from "../storage";
import { removeFrames } from "../uploads/frame-removal";
import { removeFrameSelection } from "./frame-removal";
import { ORPHAN_MIN_AGE_MS, removeOrphanUploads } from "../uploads/orphans";
import { createRun, RunError, RunValidationError } from "./service";
import { signOffRun } from "./record";
import { frameFileStatus } from "./frame-files";
import { whenRechecksIdle } from "./rechecks";
import { loader as frameImageLoader } from "~/routes/runs/frame-image";
import { sessionStorage } from "../auth/session";
import { action as apiRunsAction } from "~/routes/api/runs";
import { action as runFormAction, loader as runFormLoader } from "~/routes/runs/edit";
import { callApi } from "../../../tests/support/api-contract";

/**
 * A correction starts with the frames of the run it corrects (the same stored files, referenced
 * twice), its view setup and its rate reached time, and is tracked and checked at once. Runs with
 * the store the suite is given: the folder, or a bucket with TEST_STORAGE=s3.
 */
let lab: Awaited<ReturnType<typeof smallLab>>;
let stack: File[];
const FRAMES = 40;
const reachedAt = new Date(Date.now() - 3_600_000);

beforeAll(async () => {
  lab = await smallLab();
  stack = await renderStack(FRAMES);
});
afterAll(async () => {
  await whenTrackingIdle();
  await whenRechecksIdle();
  await stopTrackingQueue();
});

/** A float stack run (the rendered table turns at 15 rpm), uploaded, marked, tracked, checked and signed off. */
async function signedOffRun() {
  const run = await createRun(lab.runInput({ setRateRpm: 15, rateReachedAt: reachedAt }), lab.tech);
  await prepareRun(run, stack, lab.tech.id);
  await enqueueTracking(run, lab.tech.id);
  await whenTrackingIdle();
  await run.reload();
  expect(run.state).toBe("checked");
  await signOffRun(run.id, lab.manager);
  return run.reload();
}

const keysUnder = async (runId: number) => (await store().list(runPrefix(runId))).map((o) => o.key).sort();
const allRunKeys = async () => (await store().list("runs/")).length;

async function cookieOf(userId: number) {
  const session = await sessionStorage.getSession();
  session.set("userId", userId);
  return (await sessionStorage.commitSession(session)).split(";")[0]!;
}

/** The frame route's answer (status and bytes) for one frame of a run, as a signed-in person's browser gets it. */
async function frameImage(runId: number, frameId: number, userId: number): Promise<{ status: number; bytes: Buffer | null }> {
  const request = new Request(`http://localhost/runs/${runId}/frames/${frameId}/image`, { headers: { Cookie: await cookieOf(userId) } });
  let answer: unknown;
  try {
    answer = await frameImageLoader({ request, params: { id: String(runId), frameId: String(frameId) }, context: {} } as never);
  } catch (thrown) {
    answer = thrown;
  }
  if (answer instanceof Response) return { status: answer.status, bytes: answer.ok ? Buffer.from(await answer.arrayBuffer()) : null };
  // A refusal thrown as data(message, { status }).
  const init = (answer as { init?: { status?: number } } | null)?.init;
  if (init?.status) return { status: init.status, bytes: null };
  throw answer;
}

describe("a correction that carries the work over", () => {
  it("is tracked and checked without uploading again: its frames name the original's files, none is copied", async () => {
    const original = await signedOffRun();
    const originalKeys = await keysUnder(original.id);
    expect(originalKeys).toHaveLength(2 * FRAMES);
    const filesBefore = await allRunKeys();

    // The water was warmer than logged: everything else is the same.
    const correction = await createRun(lab.runInput({ setRateRpm: 15, supersedesId: original.id, waterTemperatureC: 21.5 }), lab.tech);
    expect(correction.state).toBe("frames_in");
    expect(correction.frameCount).toBe(FRAMES);
    expect(correction.rateReachedAt?.toISOString()).toBe(reachedAt.toISOString());
    const job = await TrackingJob.findOne({ where: { runId: correction.id } });
    expect(job?.state).toMatch(/^(queued|running)$/);

    await whenTrackingIdle();
    await correction.reload();
    expect(correction.state).toBe("checked");
    expect(correction.verdict).toBe("agrees");
    const check = await TheoryCheck.findOne({ where: { runId: correction.id } });
    expect(check?.verdict).toBe("agrees");
    expect((await job!.reload()).framesDone).toBe(FRAMES);

    // Stored once: not one file more in storage, nothing under the correction's own folder.
    expect(await allRunKeys()).toBe(filesBefore);
    expect(await keysUnder(correction.id)).toEqual([]);
    const [mine, theirs] = await Promise.all([
      Frame.findAll({ where: { runId: correction.id }, order: [["position", "ASC"]] }),
      Frame.findAll({ where: { runId: original.id }, order: [["position", "ASC"]] }),
    ]);
    expect(mine.map((f) => [f.position, f.fileRunId, f.storedName, f.sha256])).toEqual(theirs.map((f) => [f.position, original.id, f.storedName, f.sha256]));
    expect(mine.map((f) => frameKey(f))).toEqual(theirs.map((f) => frameKey(f)));

    // The view setup is a row of its own with the same marks; the history says what came over.
    const [setup, source] = await Promise.all([ViewSetup.findOne({ where: { runId: correction.id } }), ViewSetup.findOne({ where: { runId: original.id } })]);
    expect(setup && source && setup.id !== source.id).toBe(true);
    expect([setup!.centreXPx, setup!.centreYPx, setup!.tankEdgeRPx, setup!.scalePxPerM]).toEqual([
      source!.centreXPx,
      source!.centreYPx,
      source!.tankEdgeRPx,
      source!.scalePxPerM,
    ]);
    const history = await RunHistory.findAll({ where: { runId: correction.id }, order: [["id", "ASC"]] });
    expect(history.map((h) => h.field)).toEqual(expect.arrayContaining(["created", "frames", "viewSetup"]));

    // The frame route reads the shared file for the correction's frame; the file is the original's.
    const shown = await frameImage(correction.id, mine[3]!.id, lab.instructor.id);
    expect(shown.status).toBe(200);
    expect(shown.bytes?.equals((await store().get(frameKey(theirs[3]!)))!)).toBe(true);
    // Per run, as before: the correction's frame is not reachable under the original's address.
    expect((await frameImage(original.id, mine[3]!.id, lab.instructor.id)).status).toBe(404);
    expect((await frameFileStatus(mine)).missing).toEqual([]);
  });

  it("removing the correction's frames, or the original's, leaves the other's frames whole; the last reference takes the files", async () => {
    const original = await signedOffRun();
    const originalKeys = await keysUnder(original.id);
    const first = await createRun(lab.runInput({ setRateRpm: 15, supersedesId: original.id }), lab.tech);
    const second = await createRun(lab.runInput({ setRateRpm: 15, supersedesId: original.id }), lab.manager);
    await whenTrackingIdle();

    // Per run: another technician may not take frames from a run that is not theirs, nor anyone from a signed-off run.
    const some = await Frame.findAll({ where: { runId: first.id }, order: [["position", "ASC"]], limit: 2 });
    await expect(removeFrames(first.id, [some[0]!.id], lab.otherTech)).rejects.toMatchObject({ status: 403, code: "forbidden" });
    await expect(removeFrames(original.id, "all", lab.manager)).rejects.toMatchObject({ status: 409, code: "run_signed_off" });
    await expect(removeFrames(first.id, [some[0]!.id, 999_999], lab.tech)).rejects.toMatchObject({ status: 404, field: "frameIds" });

    const fromFirst = await removeFrames(first.id, "all", lab.tech);
    expect(fromFirst).toEqual({ removed: FRAMES, filesRemoved: 0, frameCount: 0 });
    expect(await keysUnder(original.id)).toEqual(originalKeys);
    expect((await Run.findByPk(first.id))!.state).toBe("draft");

    // Tankside itself removing the original's frames (as removing the run would): the second correction still names every file.
    const fromOriginal = await removeFrames(original.id, "all", null);
    expect(fromOriginal).toEqual({ removed: FRAMES, filesRemoved: 0, frameCount: 0 });
    expect(await keysUnder(original.id)).toEqual(originalKeys);
    const left = await Frame.findAll({ where: { runId: second.id } });
    expect(left).toHaveLength(FRAMES);
    expect((await frameFileStatus(left)).missing).toEqual([]);
    expect((await frameImage(second.id, left[0]!.id, lab.tech.id)).status).toBe(200);

    // The sweep at start keeps files that only a correction names, however old.
    expect(await removeOrphanUploads(new Date(Date.now() + 2 * ORPHAN_MIN_AGE_MS))).toBe(0);
    expect(await keysUnder(original.id)).toEqual(originalKeys);

    // The last frames naming them go: so do the files, images and thumbnails.
    const one = left[0]!;
    const fromSecond = await removeFrames(second.id, [one.id], lab.manager);
    expect(fromSecond).toEqual({ removed: 1, filesRemoved: 2, frameCount: FRAMES - 1 });
    // The stack changed: the second correction is tracked again (let that finish before its files go).
    await whenRechecksIdle();
    await whenTrackingIdle();
    expect(await store().head(frameKey(one))).toBeNull();
    expect(await store().head(frameThumbKey(one)!)).toBeNull();
    expect((await Frame.findAll({ where: { runId: second.id }, order: [["position", "ASC"]] })).map((f) => f.position)).toEqual(
      Array.from({ length: FRAMES - 1 }, (_, i) => i),
    );
    await removeFrames(second.id, "all", lab.manager);
    expect(await keysUnder(original.id)).toEqual([]);
  });

  it("the frame viewer's removal from a correction keeps the files the corrected run still names", async () => {
    const original = await signedOffRun();
    const originalKeys = await keysUnder(original.id);
    const correction = await createRun(lab.runInput({ setRateRpm: 15, supersedesId: original.id }), lab.tech);
    await whenTrackingIdle();
    const result = await removeFrameSelection(correction.id, lab.tech, { from: 0, to: 2 }, { frameCount: FRAMES });
    expect([result.removed.length, result.frameCount]).toEqual([3, FRAMES - 3]);
    await whenRechecksIdle();
    await whenTrackingIdle();
    expect(await keysUnder(original.id)).toEqual(originalKeys);
    const theirs = await Frame.findAll({ where: { runId: original.id } });
    expect(theirs).toHaveLength(FRAMES);
    expect((await frameFileStatus(theirs)).missing).toEqual([]);
  });

  it("leaves the frames out when asked: the view setup and rate reached time still come over, nothing is tracked", async () => {
    const original = await signedOffRun();
    const fresh = await createRun(lab.runInput({ setRateRpm: 15, supersedesId: original.id, leaveFramesOut: true }), lab.tech);
    expect([fresh.state, fresh.frameCount, fresh.rateReachedAt?.toISOString()]).toEqual(["draft", 0, reachedAt.toISOString()]);
    expect(await Frame.count({ where: { runId: fresh.id } })).toBe(0);
    expect(await ViewSetup.count({ where: { runId: fresh.id } })).toBe(1);
    expect(await TrackingJob.count({ where: { runId: fresh.id } })).toBe(0);
    // A rate reached time given with the correction replaces the copied one.
    const later = new Date(reachedAt.getTime() - 60_000);
    const given = await createRun(lab.runInput({ setRateRpm: 15, supersedesId: original.id, leaveFramesOut: true, rateReachedAt: later }), lab.tech);
    expect(given.rateReachedAt?.toISOString()).toBe(later.toISOString());
  });

  it("refuses a correction of an open run, leaving frames out of a run that corrects nothing, and a rate reached time after the shared frames", async () => {
    const open = await createRun(lab.runInput(), lab.tech);
    const refused = createRun(lab.runInput({ supersedesId: open.id }), lab.tech);
    await expect(refused).rejects.toBeInstanceOf(RunError);
    await expect(refused).rejects.toMatchObject({
      status: 409,
      code: "not_signed_off",
      field: "supersedesId",
      message: expect.stringMatching(/not signed off/),
    });
    await expect(createRun(lab.runInput({ leaveFramesOut: true }), lab.tech)).rejects.toMatchObject({
      problems: [{ field: "leaveFramesOut", message: expect.stringMatching(/only to a correction/) }],
    });
    const original = await signedOffRun();
    const first = await Frame.findOne({ where: { runId: original.id }, order: [["createdAt", "ASC"]] });
    const tooLate = new Date(first!.createdAt.getTime() + 1000);
    await expect(createRun(lab.runInput({ setRateRpm: 15, supersedesId: original.id, rateReachedAt: tooLate }), lab.tech)).rejects.toBeInstanceOf(
      RunValidationError,
    );
  });

  it("through the form: says what comes over, leaves the frames out when ticked, and refuses an open run with the reason", async () => {
    const original = await signedOffRun();
    const cookie = await cookieOf(lab.tech.id);
    const shown = (await runFormLoader({
      request: new Request(`http://localhost/runs/new?supersedes=${original.id}`, { headers: { Cookie: cookie } }),
      params: {},
      context: {},
    } as never)) as { carryOver: { frames: number; viewSetup: boolean; rateReachedAt: string | null } };
    expect(shown.carryOver).toEqual({ frames: FRAMES, viewSetup: true, rateReachedAt: reachedAt.toISOString() });

    const send = async (fields: Record<string, string>) => {
      const { rateReachedAt: _none, notes: _empty, ...input } = lab.runInput({ setRateRpm: 15 });
      const body = new URLSearchParams(Object.entries({ ...input, ...fields }).map(([k, v]) => [k, String(v)]));
      const request = new Request("http://localhost/runs/new", {
        method: "POST",
        headers: { Cookie: cookie, "Content-Type": "application/x-www-form-urlencoded" },
        body,
      });
      try {
        return await runFormAction({ request, params: {}, context: {} } as never);
      } catch (thrown) {
        return thrown;
      }
    };
    const made = (await send({ supersedesId: String(original.id), leaveFramesOut: "on" })) as Response;
    expect(made.status).toBe(302);
    const newId = Number(/\/runs\/(\d+)$/.exec(made.headers.get("Location") ?? "")?.[1]);
    expect(await Frame.count({ where: { runId: newId } })).toBe(0);
    expect(await ViewSetup.count({ where: { runId: newId } })).toBe(1);

    const open = await createRun(lab.runInput(), lab.tech);
    const refused = (await send({ supersedesId: String(open.id) })) as { init: { status: number }; data: { error: Record<string, string[]> } };
    expect(refused.init.status).toBe(409);
    expect(refused.data.error[""]?.[0]).toMatch(/is not signed off: change it instead/);
    const notShown = (await runFormLoader({
      request: new Request(`http://localhost/runs/new?supersedes=${open.id}`, { headers: { Cookie: cookie } }),
      params: {},
      context: {},
    } as never).catch((thrown: unknown) => thrown)) as { init: { status: number } };
    expect(notShown.init.status).toBe(409);
  });

  it("through the API: a correction comes back in state frames_in, and the refusals are the documented answers", async () => {
    const original = await signedOffRun();
    const token = (await createApiToken(lab.tech.id, "corrections")).token;
    const post = (body: object) =>
      callApi(
        apiRunsAction,
        new Request("http://localhost/api/v1/runs", {
          method: "POST",
          headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" },
          body: JSON.stringify(body),
        }),
      );
    // Without a rate reached time: the correction takes the original's.
    const body = lab.runInput({ setRateRpm: 15 });
    const made = await post({ ...body, supersedesId: original.id });
    expect(made.status).toBe(201);
    const run = (await made.json()) as { id: number; state: string };
    expect(run.state).toBe("frames_in");
    expect(await Frame.count({ where: { runId: run.id, fileRunId: original.id } })).toBe(FRAMES);
    await whenTrackingIdle();
    expect((await Run.findByPk(run.id))!.verdict).toBe("agrees");

    const open = await createRun(lab.runInput(), lab.tech);
    const notSigned = await post({ ...body, supersedesId: open.id });
    expect(notSigned.status).toBe(409);
    expect((await notSigned.json()).error).toMatchObject({ code: "not_signed_off", field: "supersedesId" });
    const alone = await post({ ...body, leaveFramesOut: true });
    expect(alone.status).toBe(422);
    expect((await alone.json()).error).toMatchObject({ code: "conditions_not_possible", field: "leaveFramesOut" });
    const wrongType = await post({ ...body, supersedesId: original.id, leaveFramesOut: "yes" });
    expect(wrongType.status).toBe(400);
    expect(await TrackingJob.count({ where: { runId: open.id } })).toBe(0);
  });
});

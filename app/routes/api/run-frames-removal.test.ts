import { afterAll, beforeAll, describe, expect, it } from "vitest";
import sharp from "sharp";
import { callApi } from "../../../tests/support/api-contract";
import { Frame, migrate } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import { sessionStorage } from "~/.server/auth/session";
import { stopTrackingQueue, whenTrackingIdle } from "~/.server/jobs/tracking-queue";
import { createRun } from "~/.server/runs/service";
import { whenRechecksIdle } from "~/.server/runs/rechecks";
import { signOffRun } from "~/.server/runs/record";
import { receiveFrameFile } from "~/.server/uploads/frames";
import { checkedRunFor, runInput, seedRunLab, type RunLab } from "~/.server/runs/testing";
import { action as framesAction } from "./run-frames";
import { action as pageAction } from "../runs/frames-remove";

let lab: RunLab;
let techToken: string;
let otherToken: string;
let instructorToken: string;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
  techToken = (await createApiToken(lab.technician.id, "script")).token;
  otherToken = (await createApiToken(lab.technician2.id, "script")).token;
  instructorToken = (await createApiToken(lab.instructor.id, "script")).token;
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
async function runWithFrames(n: number) {
  const run = await createRun(runInput(lab), lab.technician);
  for (let i = 1; i <= n; i++) await receiveFrameFile(run, new File([new Uint8Array(await png(i))], `still_${i}.png`), null);
  return run;
}
const names = async (runId: number) => (await Frame.findAll({ where: { runId }, order: [["position", "ASC"]] })).map((f) => f.originalName);

/** Every answer is checked against the OpenAPI document on the way. */
const remove = (runId: number, token: string, body: unknown) =>
  callApi(
    framesAction,
    new Request(`http://localhost/api/v1/runs/${runId}/frames`, {
      method: "DELETE",
      headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" },
      body: JSON.stringify(body),
    }),
    { runId: String(runId) },
  );

describe("DELETE /api/v1/runs/:runId/frames", () => {
  it("removes a range by position and answers what went and how many are left", async () => {
    const run = await runWithFrames(4);
    const res = await remove(run.id, techToken, { from: 1, to: 2, frameCount: 4 });
    expect(res.status).toBe(200);
    const body = (await res.json()) as { removed: { position: number; name: string }[]; frameCount: number; retracking: boolean };
    expect(body.removed.map((r) => [r.position, r.name])).toEqual([
      [1, "still_2.png"],
      [2, "still_3.png"],
    ]);
    expect([body.frameCount, body.retracking]).toEqual([2, false]);
    expect(await names(run.id)).toEqual(["still_1.png", "still_4.png"]);
  });

  it("answers 400 for a body that names nothing or a range off the stack, 403 to others, 404 for no run, 409 when the stack changed", async () => {
    const run = await runWithFrames(3);
    const bad = await remove(run.id, techToken, { from: 2 });
    expect(bad.status).toBe(400);
    expect((await bad.json()).error).toMatchObject({ code: "invalid_input", issues: [{ field: "to" }] });
    const both = await remove(run.id, techToken, { all: true, from: 0, to: 0 });
    expect(both.status).toBe(400);
    const unknown = await remove(run.id, techToken, { frames: [1] });
    expect((await unknown.json()).error.issues).toEqual(expect.arrayContaining([{ field: "frames", message: "Unknown field: frames." }]));
    const off = await remove(run.id, techToken, { from: 1, to: 3 });
    expect(off.status).toBe(400);
    expect((await off.json()).error).toMatchObject({ code: "out_of_range", field: "to" });
    expect((await remove(run.id, otherToken, { from: 0, to: 0 })).status).toBe(403);
    expect((await remove(run.id, instructorToken, { all: true })).status).toBe(403);
    expect((await remove(987_654, techToken, { all: true })).status).toBe(404);
    const changed = await remove(run.id, techToken, { all: true, frameCount: 5 });
    expect(changed.status).toBe(409);
    expect((await changed.json()).error.code).toBe("stack_changed");
    expect(await names(run.id)).toEqual(["still_1.png", "still_2.png", "still_3.png"]);
  });

  it("answers 409 run_signed_off for a signed-off run, with words that say why", async () => {
    const { run } = await checkedRunFor(lab, lab.technician);
    await signOffRun(run.id, lab.manager);
    const res = await remove(run.id, techToken, { all: true });
    expect(res.status).toBe(409);
    expect((await res.json()).error).toMatchObject({ code: "run_signed_off", message: expect.stringContaining("signed off and read-only") });
  });
});

describe("POST /runs/:id/frames/remove (the frame viewer's form)", () => {
  async function post(runId: number, userId: number, fields: Record<string, string>) {
    const session = await sessionStorage.getSession();
    session.set("userId", userId);
    const request = new Request(`http://localhost/runs/${runId}/frames/remove`, {
      method: "POST",
      headers: { Cookie: (await sessionStorage.commitSession(session)).split(";")[0]!, "Content-Type": "application/x-www-form-urlencoded" },
      body: new URLSearchParams(fields),
    });
    try {
      return (await pageAction({ request, params: { id: String(runId) }, context: {} } as never)) as unknown;
    } catch (thrown) {
      return thrown;
    }
  }
  const outcome = (r: unknown) => {
    // data() answers carry their status in `init`; a plain object is a 200.
    const d = r as { type?: string; data?: { ok: boolean; message: string }; init?: { status?: number } } & { ok?: boolean; message?: string };
    return d.type === "DataWithResponseInit" ? { status: d.init?.status ?? 200, ...d.data } : { status: 200, ok: d.ok, message: d.message };
  };

  it("needs the confirmation, counts frames from 1, and removes the frame named", async () => {
    const run = await runWithFrames(3);
    const unconfirmed = outcome(await post(run.id, lab.technician.id, { first: "2", last: "2", frameCount: "3" }));
    expect(unconfirmed).toMatchObject({ status: 400, ok: false, message: expect.stringContaining("Confirm the removal") });
    expect(await names(run.id)).toHaveLength(3);
    const done = outcome(await post(run.id, lab.technician.id, { first: "2", last: "2", frameCount: "3", confirm: "yes" }));
    expect(done).toMatchObject({ status: 200, ok: true, message: expect.stringContaining("Removed 1 frame; 2 left.") });
    expect(await names(run.id)).toEqual(["still_1.png", "still_3.png"]);
    const zero = outcome(await post(run.id, lab.technician.id, { first: "0", last: "1", frameCount: "2", confirm: "yes" }));
    expect(zero).toMatchObject({ status: 400, ok: false });
    const other = outcome(await post(run.id, lab.technician2.id, { all: "yes", frameCount: "2", confirm: "yes" }));
    expect(other).toMatchObject({ status: 403, ok: false });
    expect(await names(run.id)).toHaveLength(2);
  });
});

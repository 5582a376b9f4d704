import { afterAll, beforeAll, describe, expect, it, vi } from "vitest";
import { callApi } from "../../../tests/support/api-contract";
import { Op } from "sequelize";
import sharp from "sharp";
import { zip } from "../../../tests/support/zip-writer";
import { Booking, Calibration, Equipment, Frame, Run, migrate, sequelize } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import { createRun } from "~/.server/runs/service";
import { createCalibration } from "~/.server/calibrations";
import { createBooking } from "~/.server/bookings";
import { stopFakeSmtp } from "~/.server/mail/fake-smtp";
import { runInput, seedRunLab, type RunLab } from "~/.server/runs/testing";
import { action as createRunAction } from "./runs";
import { action as runAction } from "./run";
import { action as framesAction } from "./run-frames";
import { action as bookingsAction } from "./bookings";
import { action as decisionAction } from "./booking-decision";
import { action as calibrationAction } from "./calibration-item";

/**
 * Many requests at once in one process, through the real route modules, as the server would run
 * them. SQLite has one writer: every write must wait its turn, never fail with "database is locked".
 */

let lab: RunLab;
let meter: Equipment;
const tokens: Record<"tech" | "manager" | "instructor", string> = { tech: "", manager: "", instructor: "" };

/**
 * Calls a route function the way React Router does, checking every answer against the OpenAPI
 * document (tests/support/api-contract.ts); an exception that is not a Response is the server's 500.
 */
async function call(fn: (args: never) => unknown, request: Request, params: Record<string, string> = {}) {
  try {
    return await callApi(fn, request, params);
  } catch (thrown) {
    if (thrown instanceof Error && thrown.message.startsWith("The answer does not match the OpenAPI document")) throw thrown;
    return Response.json({ error: { code: "internal", message: thrown instanceof Error ? thrown.message : String(thrown) } }, { status: 500 });
  }
}

const json = (method: string, path: string, token: string, body: unknown) =>
  new Request(`http://localhost${path}`, {
    method,
    headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" },
    body: JSON.stringify(body),
  });

function upload(runId: number, token: string, name: string, data: Buffer) {
  const form = new FormData();
  form.set("file", new File([new Uint8Array(data)], name));
  return new Request(`http://localhost/api/v1/runs/${runId}/frames`, { method: "POST", headers: { Authorization: `Bearer ${token}` }, body: form });
}

/** A distinct, valid PNG per seed (distinct content, so none is a duplicate of another). */
const png = (seed: number) =>
  sharp({ create: { width: 64, height: 48, channels: 3, background: { r: seed % 256, g: Math.floor(seed / 256) % 256, b: 77 } } })
    .png()
    .toBuffer();

/** How many responses had each status, e.g. { 200: 1, 409: 19 }: a failure shows the whole tally. */
const tally = (responses: Response[]) => responses.reduce<Record<number, number>>((t, r) => ({ ...t, [r.status]: (t[r.status] ?? 0) + 1 }), {});
/** Runs made one after another (test setup must not itself race). */
async function runsOneByOne(n: number, purpose: (k: number) => string) {
  const runs: Run[] = [];
  for (let k = 0; k < n; k++) runs.push(await createRun(runInput(lab, { purpose: purpose(k) }), lab.technician));
  return runs;
}
const hoursFromNow = (h: number) => new Date(Math.round((Date.now() + h * 3_600_000) / 60_000) * 60_000);

/** Server errors with their messages, so a failure says what went wrong. */
async function serverErrors(responses: Response[]) {
  return Promise.all(responses.filter((r) => r.status >= 500).map(async (r) => (await r.clone().json()).error?.message as string));
}

beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
  meter = await Equipment.create({ kind: "rate_meter", name: "Hand tachometer", meterType: "tachometer" } as never);
  tokens.tech = (await createApiToken(lab.technician.id, "load")).token;
  tokens.manager = (await createApiToken(lab.manager.id, "load")).token;
  tokens.instructor = (await createApiToken(lab.instructor.id, "load")).token;
});

afterAll(async () => {
  await stopFakeSmtp();
  await sequelize.close();
});

// Generous: on a busy machine fifty requests in one queue take a while; the assertions, not the clock, decide.
describe("concurrent writes wait their turn instead of failing", { timeout: 120_000 }, () => {
  it("20 approvals of overlapping bookings at once: exactly one 200, the others 409, no 500", async () => {
    const bookings: Booking[] = [];
    for (let i = 0; i < 20; i++) {
      // Every request overlaps every other one: all start within the first of them.
      const { booking } = await createBooking(
        { equipmentId: lab.tableA.id, start: hoursFromNow(48 + i / 60), end: hoursFromNow(50 + i / 60), purpose: `Overlap ${i}` },
        lab.instructor,
      );
      bookings.push(booking);
    }
    const responses = await Promise.all(
      bookings.map((b) => call(decisionAction, json("POST", `/api/v1/bookings/${b.id}/approve`, tokens.manager, {}), { id: String(b.id) })),
    );
    expect(tally(responses)).toEqual({ 200: 1, 409: 19 });
    expect(await serverErrors(responses)).toEqual([]);
    expect(await Booking.count({ where: { id: bookings.map((b) => b.id), state: "approved" } })).toBe(1);
  });

  it("10 single-frame uploads to one run at once are all stored", async () => {
    const run = await createRun(runInput(lab, { purpose: "Parallel frames" }), lab.technician);
    const images = await Promise.all(Array.from({ length: 10 }, (_, i) => png(1000 + i)));
    const responses = await Promise.all(
      images.map((data, i) => call(framesAction, upload(run.id, tokens.tech, `frame_${i + 1}.png`, data), { runId: String(run.id) })),
    );
    expect(tally(responses)).toEqual({ 201: 10 });
    expect(await Frame.count({ where: { runId: run.id } })).toBe(10);
    const positions = (await Frame.findAll({ where: { runId: run.id }, order: [["position", "ASC"]] })).map((f) => f.position);
    expect(positions).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9]);
    expect((await Run.findByPk(run.id))!.frameCount).toBe(10);
  });

  it("10 ZIP uploads of 20 good frames each, at once, to ten runs: all 200 frames are stored", async () => {
    const runs = await runsOneByOne(10, (k) => `Zip run ${k}`);
    const zips = await Promise.all(
      runs.map(async (_, k) =>
        zip(await Promise.all(Array.from({ length: 20 }, async (_, i) => ({ name: `frame_${i + 1}.png`, data: await png(2000 + k * 20 + i) })))),
      ),
    );
    const responses = await Promise.all(
      runs.map((run, k) => call(framesAction, upload(run.id, tokens.tech, `stack_${k}.zip`, zips[k]!), { runId: String(run.id) })),
    );
    const bodies = await Promise.all(responses.map((r) => r.clone().json()));
    expect({ statuses: tally(responses), framesRefused: bodies.reduce((n, b) => n + (b.rejected?.length ?? 0), 0) }).toEqual({
      statuses: { 201: 10 },
      framesRefused: 0,
    });
    expect(await Frame.count({ where: { runId: runs.map((r) => r.id) } })).toBe(200);
  });

  it("50 mixed writes at once (runs logged and edited, bookings asked and approved, calibrations edited, frames uploaded): no 500", async () => {
    const runs = await runsOneByOne(5, (k) => `Mixed ${k}`);
    const cals: Calibration[] = [];
    for (let k = 0; k < 5; k++) {
      cals.push(
        await createCalibration(
          {
            kind: "rate",
            equipmentId: lab.tableB.id,
            meterId: meter.id,
            performedOn: "2026-11-20",
            readings: [5, 10, 15, 20].map((s) => ({ setRpm: s, measuredRpm: s * 1.002 })),
          },
          lab.technician,
        ),
      );
    }
    const requested: Booking[] = [];
    for (let k = 0; k < 10; k++) {
      const { booking } = await createBooking(
        { equipmentId: lab.tableB.id, start: hoursFromNow(100 + 3 * k), end: hoursFromNow(101 + 3 * k), purpose: `Mixed ${k}` },
        lab.instructor,
      );
      requested.push(booking);
    }
    const images = await Promise.all(Array.from({ length: 10 }, (_, i) => png(5000 + i)));
    const body = runInput(lab, { purpose: "Logged under load" });
    const kinds = [
      () => call(createRunAction, json("POST", "/api/v1/runs", tokens.tech, body)),
      (k: number) =>
        call(runAction, json("PATCH", `/api/v1/runs/${runs[k % 5]!.id}`, tokens.tech, { waterTemperatureC: 18 + k / 10, notes: `edit ${k}` }), {
          id: String(runs[k % 5]!.id),
        }),
      (k: number) =>
        call(
          bookingsAction,
          json("POST", "/api/v1/bookings", tokens.instructor, {
            equipmentId: lab.tableA.id,
            start: hoursFromNow(200 + 3 * k).toISOString(),
            end: hoursFromNow(201 + 3 * k).toISOString(),
            purpose: `Asked under load ${k}`,
          }),
        ),
      (k: number) => call(decisionAction, json("POST", `/api/v1/bookings/${requested[k]!.id}/approve`, tokens.manager, {}), { id: String(requested[k]!.id) }),
      (k: number) =>
        call(
          calibrationAction,
          json("PUT", `/api/v1/calibrations/${cals[k % 5]!.id}`, tokens.tech, {
            kind: "rate",
            equipmentId: lab.tableB.id,
            meterId: meter.id,
            performedOn: "2026-11-21",
            notes: `edit ${k}`,
            readings: [5, 10, 15, 20].map((s) => ({ setRpm: s, measuredRpm: s * (1 + k / 1000) })),
          }),
          { id: String(cals[k % 5]!.id) },
        ),
      (k: number) => call(framesAction, upload(runs[k % 5]!.id, tokens.tech, `mixed_${k}.png`, images[k]!), { runId: String(runs[k % 5]!.id) }),
    ];
    // 50 requests, the six kinds interleaved (9 runs logged, 9 run edits, 8 of each other kind).
    const responses = await Promise.all(Array.from({ length: 50 }, (_, i) => kinds[i % 6]!(Math.floor(i / 6))));
    const failed = responses.filter((r) => r.status < 200 || r.status >= 300);
    expect(tally(failed)).toEqual({});
    expect(await serverErrors(responses)).toEqual([]);
    expect(await Run.count({ where: { purpose: "Logged under load" } })).toBe(9);
    expect(await Booking.count({ where: { purpose: { [Op.like]: "Asked under load %" } } })).toBe(8);
    expect(await Booking.count({ where: { id: requested.slice(0, 8).map((b) => b.id), state: "approved" } })).toBe(8);
    expect(await Frame.count({ where: { runId: runs.map((r) => r.id) } })).toBe(8);
    const notes = (await Calibration.findAll({ where: { id: cals.map((c) => c.id) } })).map((c) => c.notes);
    expect(notes.every((n) => /^edit \d$/.test(n ?? ""))).toBe(true);
  });

  it("a frame of a ZIP that cannot be stored (the database fails) is the server's error, not a damaged entry", async () => {
    const run = (await runsOneByOne(1, () => "Zip with a failing store"))[0]!;
    const archive = zip([
      { name: "frame_1.png", data: await png(9001) },
      { name: "frame_2.png", data: await png(9002) },
    ]);
    const failing = vi.spyOn(Frame, "create").mockRejectedValueOnce(new Error("disk I/O error"));
    try {
      const response = await call(framesAction, upload(run.id, tokens.tech, "stack.zip", archive), { runId: String(run.id) });
      expect(response.status).toBe(500);
      expect((await response.json()).error.message).toBe("disk I/O error");
    } finally {
      failing.mockRestore();
    }
  });
});

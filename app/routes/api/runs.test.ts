import { beforeAll, describe, expect, it } from "vitest";
import { callApi } from "../../../tests/support/api-contract";
import { migrate, Run, RunHistory, TheoryCheck, Track, ViewSetup } from "~/.server/db";
import { createApiToken, revokeApiToken } from "~/.server/auth/api-tokens";
import { createRun } from "~/.server/runs/service";
import { signOffRun } from "~/.server/runs/record";
import { doneTrackingJob, runInput, seedRunLab, type RunLab } from "~/.server/runs/testing";
import { presentFingerprint } from "~/.server/runs/provenance";
import { loader as listLoader, action as createAction } from "./runs";
import { loader as runLoader, action as runAction } from "./run";
import { loader as csvLoader } from "./run-tracks-csv";
import { loader as exportLoader } from "./run-export";
import { tiltedCamera } from "../../../tests/fixtures/tilted-camera";
import { imageToTable } from "~/lib/analysis/frames";
import { correctionOfSetup } from "~/lib/projective/stored-marks";

let lab: RunLab;
let techToken: string;
let instructorToken: string;
let managerToken: string;

/** Every answer is checked against the OpenAPI document on the way (see tests/support/api-contract.ts). */
const call = callApi;
const get = (path: string, token: string | null) => new Request(`http://localhost${path}`, { headers: token ? { Authorization: `Bearer ${token}` } : {} });
const send = (method: string, path: string, token: string, body: unknown) =>
  new Request(`http://localhost${path}`, {
    method,
    headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" },
    body: JSON.stringify(body),
  });

const setupRow = (run: Run) => ({
  runId: run.id,
  cameraId: lab.camera.id,
  centreXPx: 640,
  centreYPx: 360,
  tankEdgeXPx: null,
  tankEdgeYPx: null,
  tankEdgeRPx: null,
  scalePxPerM: 1000,
  scalePoints: null,
  mirrored: false,
  createdById: lab.technician.id,
});

/**
 * A checked run with one track and a stored check of known figures. The check carries the
 * fingerprint of the run's inputs as checkRun records it, so it is the run's current check.
 */
async function checkedRun(overrides: Record<string, unknown> = {}, opts: { points?: number[][]; withSetup?: boolean; calibrationsInForce?: unknown } = {}) {
  const run = await createRun(runInput(lab, overrides), lab.technician);
  if (opts.calibrationsInForce) await run.update({ calibrationsInForce: JSON.stringify(opts.calibrationsInForce) });
  if (opts.withSetup !== false) await ViewSetup.create(setupRow(run));
  const job = await doneTrackingJob(run, lab.technician.id);
  const points = opts.points ?? [
    [0, 700, 300, 0],
    [0.5, 650, 250, 15],
  ];
  const track = await Track.create({
    runId: run.id,
    jobId: job.id,
    number: 1,
    points: JSON.stringify(points),
    pointCount: points.length,
    detectedShare: 1,
    jitterPx: 0.2,
  });
  await run.update({ state: "checked", verdict: "agrees" });
  const { fingerprint } = await presentFingerprint(run, [track]);
  if (!fingerprint) throw new Error("the fixture's track is not from the run's present inputs");
  await TheoryCheck.create({
    runId: run.id,
    trackId: track.id,
    verdict: "agrees",
    fMeasuredPerS: 2.1,
    fPredictedPerS: 2.09,
    result: JSON.stringify({
      result: { omega: 1.05, settings: { window: 9, polyOrder: 2, tolerance: 0.03 } },
      input: { omegaSet: 1.047, cameraMode: overrides.cameraMode ?? "rotating", settings: { tolerance: 0.03 } },
    }),
    codeVersion: "test",
    createdById: lab.technician.id,
    inputFingerprint: fingerprint,
  });
  return { run, job, track };
}

beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
  techToken = (await createApiToken(lab.technician.id, "script")).token;
  instructorToken = (await createApiToken(lab.instructor.id, "script")).token;
  managerToken = (await createApiToken(lab.manager.id, "script")).token;
  // 30 runs across two tables and two technicians, logged a day apart, to page and filter through.
  for (let i = 0; i < 30; i++) {
    const run = await createRun(
      runInput(lab, {
        tableId: i % 2 ? lab.tableB.id : lab.tableA.id,
        setRateRpm: 5 + (i % 7),
        purpose: i === 7 ? "Dye spiral with 50% glycerol" : `Float run ${i}`,
        notes: i === 11 ? "Camera slipped; glycerol mix" : undefined,
      }),
      i % 3 ? lab.technician : lab.technician2,
    );
    await Run.update(
      {
        createdAt: new Date(Date.UTC(2025, 0, 1 + i, 10)),
        state: i % 5 === 0 ? "checked" : "draft",
        verdict: i % 5 === 0 ? (i % 10 ? "disagrees" : "agrees") : null,
      },
      { where: { id: run.id }, silent: true },
    );
  }
});

describe("GET /api/v1/runs", () => {
  it("pages newest first with the total, and every item names its equipment and technician", async () => {
    const res = await call(listLoader, get("/api/v1/runs?pageSize=10", techToken));
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.total).toBe(30);
    expect(body.page).toBe(1);
    expect(body.pageSize).toBe(10);
    expect(body.items).toHaveLength(10);
    const times = body.items.map((r: { createdAt: string }) => r.createdAt);
    expect(times).toEqual([...times].sort().reverse());
    expect(body.items[0]).toMatchObject({ table: { name: expect.stringMatching(/Bench table/) }, technician: { name: expect.any(String) } });
  });

  it("combines filters: table, technician, state, verdict, date range and text", async () => {
    const q = async (s: string) =>
      (await (await call(listLoader, get(`/api/v1/runs?${s}`, instructorToken))).json()) as {
        total: number;
        items: { id: number; purpose: string; verdict: string | null; table: { id: number } }[];
      };
    expect((await q(`table=${lab.tableB.id}`)).total).toBe(15);
    expect((await q(`technician=${lab.technician2.id}`)).total).toBe(10);
    expect((await q("state=checked")).total).toBe(6);
    expect((await q("verdict=disagrees")).items.every((r) => r.verdict === "disagrees")).toBe(true);
    expect((await q("verdict=none")).total).toBe(24);
    expect((await q("from=2025-01-05&to=2025-01-09")).total).toBe(5);
    const text = await q("q=GLYCEROL");
    expect(text.items.map((r) => r.purpose).sort()).toEqual(["Dye spiral with 50% glycerol", "Float run 11"]);
    // % is a literal character, not a wildcard: "0%" matches only the purpose that has it.
    expect((await q("q=0%25")).total).toBe(1);
    expect((await q(`table=${lab.tableA.id}&state=checked`)).items.every((r) => r.table.id === lab.tableA.id)).toBe(true);
  });

  it("sorts by a column in either direction, ties broken by id", async () => {
    const res = await call(listLoader, get("/api/v1/runs?sort=setRateRpm&dir=asc&pageSize=100", techToken));
    const rates = (await res.json()).items.map((r: { setRateRpm: number }) => r.setRateRpm);
    expect(rates).toEqual([...rates].sort((a: number, b: number) => a - b));
  });

  it("answers 400 with a clear message for an unknown filter or sort field, a malformed date and a page out of range", async () => {
    for (const [query, text] of [
      ["colour=red", /Unknown filter "colour"/],
      ["sort=purpose", /There is no sort "purpose": the runs list sorts by createdAt \(logged\)/],
      ["from=2025-13-01", /not a real calendar date/],
      ["page=4&pageSize=10", /Page 4 is past the last page: 30 runs make 3 pages of 10/],
      ["page=2&state=signed_off", /No runs match these filters, so there is only page 1/],
    ] as const) {
      const res = await call(listLoader, get(`/api/v1/runs?${query}`, techToken));
      expect(res.status, query).toBe(400);
      const body = await res.json();
      expect(body.error.code).toBe("invalid_filter");
      expect(body.error.message).toMatch(text);
    }
  });

  it("answers 401 for no token, a wrong token and a revoked one", async () => {
    expect((await call(listLoader, get("/api/v1/runs", null))).status).toBe(401);
    const wrong = await call(listLoader, get("/api/v1/runs", "tks_not-a-real-token"));
    expect(wrong.status).toBe(401);
    expect((await wrong.json()).error.code).toBe("invalid_token");
    const { token, row } = await createApiToken(lab.technician.id, "to revoke");
    expect((await call(listLoader, get("/api/v1/runs", token))).status).toBe(200);
    await revokeApiToken(lab.technician.id, row.id);
    const revoked = await call(listLoader, get("/api/v1/runs", token));
    expect(revoked.status).toBe(401);
    expect((await revoked.json()).error).toMatchObject({ code: "token_revoked", message: expect.stringMatching(/revoked because its owner revoked it/) });
  });
});

describe("POST /api/v1/runs", () => {
  it("logs a run for a technician: 201 with the run, stored in metres, with its history", async () => {
    const res = await call(createAction, send("POST", "/api/v1/runs", techToken, runInput(lab, { waterDepthCm: 12.5, purpose: "Scripted run" })));
    expect(res.status).toBe(201);
    const run = await res.json();
    expect(run).toMatchObject({ state: "draft", waterDepthM: 0.125, technicianId: lab.technician.id, purpose: "Scripted run" });
    expect(res.headers.get("Location")).toBe(`/api/v1/runs/${run.id}`);
    expect(await RunHistory.count({ where: { runId: run.id, field: "created" } })).toBe(1);
  });

  it("refuses an instructor (403), bad and unknown fields (400 invalid_input, per field) and conditions the table cannot run (422), saving nothing", async () => {
    const before = await Run.count();
    const instructor = await call(createAction, send("POST", "/api/v1/runs", instructorToken, runInput(lab)));
    expect(instructor.status).toBe(403);
    const bad = await call(createAction, send("POST", "/api/v1/runs", techToken, runInput(lab, { setRateRpm: -3, direction: "up" })));
    expect(bad.status).toBe(400);
    const body = (await bad.json()) as { error: { code: string; issues: { field: string; message: string }[] } };
    expect(body.error.code).toBe("invalid_input");
    const issue = (b: typeof body, field: string) => b.error.issues.find((i) => i.field === field)?.message;
    expect(issue(body, "setRateRpm")).toMatch(/above 0 rpm/);
    expect(issue(body, "direction")).toMatch(/counterclockwise or clockwise/);
    const extra = await call(createAction, send("POST", "/api/v1/runs", techToken, { ...runInput(lab), waterDepthM: 0.1 }));
    expect(extra.status).toBe(400);
    const extraBody = (await extra.json()) as typeof body & { error: { message: string } };
    expect(extraBody.error.message).toMatch(/Unknown field: waterDepthM/);
    expect(extraBody.error.issues).toEqual([{ field: "waterDepthM", message: "Unknown field: waterDepthM." }]);
    // Well-formed, but beyond what this table is rated for: the lab's register refuses it.
    const tooFast = await call(createAction, send("POST", "/api/v1/runs", techToken, runInput(lab, { setRateRpm: 45 })));
    expect(tooFast.status).toBe(422);
    const fastBody = (await tooFast.json()) as typeof body & { error: { field: string } };
    expect(fastBody.error.code).toBe("conditions_not_possible");
    expect(fastBody.error.field).toBe("setRateRpm");
    expect(issue(fastBody, "setRateRpm")).toMatch(/rated to 30 rpm/);
    expect(await Run.count()).toBe(before);
  });
});

describe("GET and PATCH /api/v1/runs/:id", () => {
  it("returns the run record with equipment, counts, latest job and check, and history", async () => {
    const { run, job } = await checkedRun();
    const res = await call(runLoader, get(`/api/v1/runs/${run.id}`, instructorToken), { id: String(run.id) });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({
      id: run.id,
      state: "checked",
      equipment: { table: { name: "Bench table North" }, tank: { name: "Round tank 40" }, camera: { name: "Mast camera" } },
      frames: { count: 0 },
      latestTrackingJob: { id: job.id, state: "done" },
      tracks: { count: 1 },
      latestTheoryCheck: { verdict: "agrees", fMeasuredPerS: 2.1 },
      checkStatus: "current",
      checkOutOfDate: null,
    });
    // A check stored before every track was checked: its one result is its only per-track check, and nothing was combined.
    expect(body.latestTheoryCheck.checks).toEqual([expect.objectContaining({ trackNumber: null, verdict: "agrees", fMeasuredPerS: 2.1, flagged: false })]);
    expect(body.latestTheoryCheck.combination).toBeNull();
    expect(body.history[0]).toMatchObject({ field: "created", who: { name: "Ada Brightwater" } });
    expect((await call(runLoader, get("/api/v1/runs/999999", techToken), { id: "999999" })).status).toBe(404);
  });

  it("changes a field and records old → new; a signed-off run answers 409 and keeps its values", async () => {
    const { run } = await checkedRun();
    const ok = await call(runAction, send("PATCH", `/api/v1/runs/${run.id}`, techToken, { waterTemperatureC: 22.5 }), { id: String(run.id) });
    expect(ok.status).toBe(200);
    expect((await ok.json()).waterTemperatureC).toBe(22.5);
    const change = await RunHistory.findOne({ where: { runId: run.id, field: "waterTemperatureC" } });
    expect([change?.oldValue, change?.newValue]).toEqual(["20", "22.5"]);

    await signOffRun(run.id, lab.manager);
    for (const token of [techToken, managerToken]) {
      const refused = await call(runAction, send("PATCH", `/api/v1/runs/${run.id}`, token, { waterTemperatureC: 30 }), { id: String(run.id) });
      expect(refused.status).toBe(409);
      expect((await refused.json()).error).toMatchObject({ code: "run_signed_off", message: expect.stringMatching(/signed off and read-only/) });
    }
    await run.reload();
    expect(run.waterTemperatureC).toBe(22.5);
  });
});

describe("GET /api/v1/runs/:id/tracks.csv and export.json", () => {
  it("answers 409 with a clear message for a run with no tracks", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    const res = await call(csvLoader, get(`/api/v1/runs/${run.id}/tracks.csv`, techToken), { id: String(run.id) });
    expect(res.status).toBe(409);
    const body = await res.json();
    expect(body.error.code).toBe("no_tracks");
    expect(body.error.message).toMatch(/has no tracks yet/);
  });

  it("writes pixel columns always, and rotating-frame metres once the view setup has a scale", async () => {
    const { run, track } = await checkedRun(
      {},
      {
        withSetup: false,
        points: [
          [0, 700, 300, 0],
          [0.5, 650, 250, 15],
        ],
      },
    );
    const csv = async () => {
      const res = await call(csvLoader, get(`/api/v1/runs/${run.id}/tracks.csv`, techToken), { id: String(run.id) });
      expect(res.status).toBe(200);
      expect(res.headers.get("Content-Type")).toMatch(/^text\/csv/);
      return (await res.text()).trim().split("\r\n");
    };
    // The track's number in the run (1), not its database id.
    expect(track.id).not.toBe(track.number);
    expect(await csv()).toEqual(["track,t_s,x_px,y_px", "1,0,700,300", "1,0.5,650,250"]);

    // Co-rotating camera, centre (640, 360), 1000 px/m: x = (col − 640)/1000, y = −(row − 360)/1000.
    await ViewSetup.create(setupRow(run));
    const lines = await csv();
    expect(lines[0]).toBe("track,t_s,x_px,y_px,x_m,y_m");
    const [, , , , xm, ym] = lines[2]!.split(",").map(Number);
    expect(xm).toBeCloseTo(0.01, 9);
    expect(ym).toBeCloseTo(0.11, 9);
  });

  it("carries a tilted camera's rim points and its correction, and exports positions corrected by it", async () => {
    const { run } = await checkedRun({}, { withSetup: false, points: [[0, 700, 300, 0]] });
    // A camera 100 cm up, leaning 5° towards azimuth 30°, 1200 px focal length; its image of a 14 cm rim.
    const camera = tiltedCamera(5, 30, { width: 1280, height: 720 });
    const rim = Array.from({ length: 8 }, (_, i) => camera.project({ x: 14 * Math.cos((i * Math.PI) / 4), y: 14 * Math.sin((i * Math.PI) / 4) }));
    const centre = camera.project({ x: 0, y: 0 });
    await ViewSetup.create({ ...setupRow(run), centreXPx: centre.x, centreYPx: centre.y, scalePxPerM: 1200, rimPoints: JSON.stringify(rim) });
    const res = await call(runLoader, get(`/api/v1/runs/${run.id}`, techToken), { id: String(run.id) });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body.viewSetup.rimPoints).toHaveLength(8);
    expect(body.viewSetup.knownPoints).toBeNull();
    expect(body.viewSetup.tiltCorrection).toMatchObject({ method: "rim ellipse", sideKnown: true });
    expect(body.viewSetup.tiltCorrection.tiltDeg).toBeCloseTo(5, 6);
    expect(body.viewSetup.tiltCorrection.towardDeg).toBeGreaterThan(28);
    expect(body.viewSetup.tiltCorrection.towardDeg).toBeLessThan(32);
    // The CSV's metres come through the correction: the point seen at (700, 300) lies where the table has it.
    const csv = await call(csvLoader, get(`/api/v1/runs/${run.id}/tracks.csv`, techToken), { id: String(run.id) });
    const [, , , , xm, ym] = (await csv.text()).trim().split("\r\n")[1]!.split(",").map(Number);
    const expected = imageToTable(
      { x: 700, y: 300 },
      {
        centre,
        pxPerM: 1200,
        mirrored: false,
        correction: correctionOfSetup({ centreXPx: centre.x, centreYPx: centre.y, mirrored: false, rimPoints: JSON.stringify(rim) }).correction!.homography,
      },
    );
    const plain = imageToTable({ x: 700, y: 300 }, { centre, pxPerM: 1200, mirrored: false });
    expect(xm).toBeCloseTo(expected.x, 9);
    expect(ym).toBeCloseTo(expected.y, 9);
    expect(Math.hypot(xm! - plain.x, ym! - plain.y)).toBeGreaterThan(1e-4);
  });

  it("de-rotates a lab-fixed camera's positions by −Ω(t − t₀) with the checked rate", async () => {
    // Ω = 1.05 rad/s from the stored check; after 0.5 s the frame has turned 0.525 rad.
    const { run } = await checkedRun(
      { cameraMode: "lab" },
      {
        points: [
          [0, 740, 360, 0],
          [0.5, 740, 360, 15],
        ],
      },
    );
    const text = await (await call(csvLoader, get(`/api/v1/runs/${run.id}/tracks.csv`, techToken), { id: String(run.id) })).text();
    const [, , , , xm, ym] = text.trim().split("\r\n")[2]!.split(",").map(Number);
    expect(xm).toBeCloseTo(0.1 * Math.cos(-0.525), 8);
    expect(ym).toBeCloseTo(0.1 * Math.sin(-0.525), 8);
  });

  it("exports the run with conditions, equipment, calibration ids, settings, result and code version", async () => {
    const { run } = await checkedRun(
      {},
      {
        calibrationsInForce: [
          { id: 41, kind: "rate" },
          { id: 42, kind: "scale" },
        ],
      },
    );
    const res = await call(exportLoader, get(`/api/v1/runs/${run.id}/export.json`, instructorToken), { id: String(run.id) });
    expect(res.status).toBe(200);
    const body = await res.json();
    expect(body).toMatchObject({
      format: "tankside-run-export",
      codeVersion: expect.stringMatching(/^0\.1\.0/),
      conditions: { setRateRpm: 10, direction: "ccw", waterDepthM: 0.1, cameraMode: "rotating" },
      equipment: { table: { id: lab.tableA.id } },
      calibrationIdsInForce: [41, 42],
      settings: { used: { window: 9, polyOrder: 2, tolerance: 0.03 }, requested: { tolerance: 0.03 } },
      theoryCheckInput: { omegaSet: 1.047 },
      theoryCheck: { verdict: "agrees", result: { result: { omega: 1.05 } } },
    });
  });
});

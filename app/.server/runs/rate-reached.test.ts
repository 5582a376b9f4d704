import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Equipment, Frame, migrate, Run, RunHistory } from "../db";
import { sessionStorage } from "../auth/session";
import { createApiToken } from "../auth/api-tokens";
import { createCalibration, signOffCalibration, toDayString } from "../calibrations";
import { calibrationsInForce, calibrationsPastDueAt } from "../calibrations-in-force";
import { stopTrackingQueue } from "../jobs/tracking-queue";
import { createRun, RunValidationError, updateRun } from "./service";
import { currentCheck } from "./current-check";
import { whenRechecksIdle } from "./rechecks";
import { storedCheck } from "./theory";
import { checkedRunFor, runInput, seedRunLab, type RunLab } from "./testing";
import { action as editAction } from "~/routes/runs/edit";
import { action as apiRunAction } from "~/routes/api/run";
import { callApi } from "../../../tests/support/api-contract";

let lab: RunLab;
let techToken: string;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
  techToken = (await createApiToken(lab.technician.id, "script")).token;
});
afterAll(async () => {
  await stopTrackingQueue();
});

const hours = (h: number) => new Date(Date.now() + h * 3_600_000);

async function fieldProblem(promise: Promise<unknown>) {
  const err = await promise.then(
    () => null,
    (e: unknown) => e,
  );
  expect(err).toBeInstanceOf(RunValidationError);
  return (err as RunValidationError).problems;
}

describe("the rate reached time", () => {
  it("is refused in the future (beyond a minute of clock skew) on logging and on change; 30 s ahead is skew and accepted", async () => {
    expect(await fieldProblem(createRun(runInput(lab, { rateReachedAt: hours(1) }), lab.technician))).toEqual([
      { field: "rateReachedAt", message: expect.stringMatching(/in the future/) },
    ]);
    const run = await createRun(runInput(lab, { rateReachedAt: new Date(Date.now() + 30_000) }), lab.technician);
    expect(await fieldProblem(updateRun(run.id, runInput(lab, { rateReachedAt: hours(2) }), lab.technician))).toEqual([
      { field: "rateReachedAt", message: expect.stringMatching(/in the future/) },
    ]);
  });

  it("is refused after the first frame arrived: a field message on the page (400) and 422 with the field through the API, keeping the stored time", async () => {
    const reached = hours(-2);
    const run = await createRun(runInput(lab, { rateReachedAt: reached }), lab.technician);
    await Frame.create({
      runId: run.id,
      position: 0,
      originalName: "f0.png",
      storedName: `none-${run.id}.png`,
      thumbName: null,
      sha256: String(run.id).padEnd(64, "a"),
      format: "png",
      widthPx: 1280,
      heightPx: 720,
      sizeBytes: 1,
      timeS: null,
    });
    const afterFrames = new Date(Date.now() + 20_000);

    const api = await callApi(
      apiRunAction,
      new Request(`http://localhost/api/v1/runs/${run.id}`, {
        method: "PATCH",
        headers: { Authorization: `Bearer ${techToken}`, "Content-Type": "application/json" },
        body: JSON.stringify({ rateReachedAt: afterFrames.toISOString() }),
      }),
      { id: String(run.id) },
    );
    expect(api.status).toBe(422);
    expect((await api.json()).error).toMatchObject({
      code: "conditions_not_possible",
      field: "rateReachedAt",
      issues: [{ field: "rateReachedAt", message: expect.stringMatching(/after the first frame arrived/) }],
    });

    const session = await sessionStorage.getSession();
    session.set("userId", lab.technician.id);
    const cookie = (await sessionStorage.commitSession(session)).split(";")[0]!;
    const form = new URLSearchParams(Object.entries({ ...runInput(lab), rateReachedAt: afterFrames.toISOString() }).map(([k, v]) => [k, String(v)]));
    const page = (await editAction({
      request: new Request(`http://localhost/runs/${run.id}/edit`, {
        method: "POST",
        headers: { Cookie: cookie, "Content-Type": "application/x-www-form-urlencoded" },
        body: form,
      }),
      params: { id: String(run.id) },
      context: {},
    } as never)) as unknown as { init: { status: number }; data: { error: Record<string, string[]> } };
    expect(page.init.status).toBe(400);
    expect(page.data.error.rateReachedAt?.[0]).toMatch(/after the first frame arrived/);
    expect((await Run.findByPk(run.id))!.rateReachedAt!.toISOString()).toBe(reached.toISOString());
  });

  it("when corrected, re-freezes the calibrations for the run's time: a rate calibration wrongly past due under a future time is in force again, the history says so and the check is fitted with it", async () => {
    const meter = await Equipment.create({ kind: "rate_meter", name: "Rate-reached tachometer", meterType: "tachometer" } as never);
    const readings = [5, 10, 15, 20].map((s, i) => ({ setRpm: s, measuredRpm: s + (i % 2 ? 0.004 : -0.004) }));
    const cal = await createCalibration(
      { kind: "rate", equipmentId: lab.tableA.id, meterId: meter.id, performedOn: toDayString(hours(-24)), readings } as never,
      lab.technician,
    );
    await signOffCalibration(cal.id, lab.manager);
    const { run } = await checkedRunFor(lab, lab.technician);

    // A time typed a year ahead, stored before such times were refused: the calibration falls due before it.
    const wrong = hours(24 * 400);
    const ids = [run.tableId, run.tankId, run.cameraId];
    await run.update({
      rateReachedAt: wrong,
      calibrationsInForce: JSON.stringify({
        at: wrong.toISOString(),
        inForce: await calibrationsInForce(ids, wrong),
        pastDue: await calibrationsPastDueAt(ids, wrong),
      }),
    });
    expect(await currentCheck(run.id)).toMatchObject({ status: "out_of_date", changed: ["rate reached time", "calibrations in force"] });

    // The table reached its rate after the calibration was signed off, so the calibration applies.
    const right = new Date();
    await updateRun(run.id, runInput(lab, { rateReachedAt: right }), lab.technician);
    await run.reload();
    const snapshot = JSON.parse(run.calibrationsInForce!);
    expect(snapshot.at).toBe(right.toISOString());
    expect(snapshot.inForce.map((c: { id: number }) => c.id)).toContain(cal.id);
    expect(snapshot.pastDue).toEqual([]);
    const history = await RunHistory.findAll({ where: { runId: run.id }, order: [["id", "ASC"]] });
    const rows = history.map((h) => [h.field, h.oldValue, h.newValue]);
    expect(rows).toContainEqual(["rateReachedAt", wrong.toISOString(), right.toISOString()]);
    expect(rows).toContainEqual(["calibrationsInForce", `in force: none; past due: rate #${cal.id}`, `in force: rate #${cal.id}; past due: none`]);

    await whenRechecksIdle();
    const now = await currentCheck(run.id);
    expect(now.status).toBe("current");
    expect(storedCheck(now.check!).result).toMatchObject({ omegaSource: "rate calibration", calibrationId: cal.id });
    expect(history.length).toBeLessThan(await RunHistory.count({ where: { runId: run.id } }));
    const last = await RunHistory.findOne({ where: { runId: run.id, field: "theoryCheck" }, order: [["id", "DESC"]] });
    expect(last!.newValue).toMatch(/re-checked after a change of rate reached time, calibrations in force\)$/);
  });
});

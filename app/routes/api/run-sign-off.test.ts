import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { callApi } from "../../../tests/support/api-contract";
import { migrate, Run } from "~/.server/db";
import { createApiToken } from "~/.server/auth/api-tokens";
import { stopTrackingQueue } from "~/.server/jobs/tracking-queue";
import { createRun } from "~/.server/runs/service";
import { holdRechecks, whenRechecksIdle } from "~/.server/runs/rechecks";
import { checkedRunFor, runInput, seedRunLab, type RunLab } from "~/.server/runs/testing";
import { action as signOffAction, loader as signOffLoader } from "./run-sign-off";
import { loader as runLoader, action as runAction } from "./run";
import { loader as exportLoader } from "./run-export";

let lab: RunLab;
let techToken: string;
let managerToken: string;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
  techToken = (await createApiToken(lab.technician.id, "script")).token;
  managerToken = (await createApiToken(lab.manager.id, "script")).token;
});
afterAll(async () => {
  await stopTrackingQueue();
});

/** Every answer is checked against the OpenAPI document on the way (see tests/support/api-contract.ts). */
const call = (fn: (args: never) => unknown, request: Request, id: number) => callApi(fn, request, { id: String(id) });
const req = (method: string, path: string, token: string | null, body?: unknown) =>
  new Request(`http://localhost${path}`, {
    method,
    headers: { ...(token ? { Authorization: `Bearer ${token}` } : {}), ...(body ? { "Content-Type": "application/json" } : {}) },
    body: body ? JSON.stringify(body) : undefined,
  });
const signOff = (id: number, token: string | null) => call(signOffAction, req("POST", `/api/v1/runs/${id}/sign-off`, token), id);

describe("POST /api/v1/runs/:id/sign-off", () => {
  it("answers 401 without a token and 403 to anyone but a lab manager, changing nothing", async () => {
    const { run } = await checkedRunFor(lab, lab.technician);
    expect((await signOff(run.id, null)).status).toBe(401);
    const tech = await signOff(run.id, techToken);
    expect(tech.status).toBe(403);
    expect((await Run.findByPk(run.id))!.state).toBe("checked");
    expect((await call(signOffLoader, req("GET", `/api/v1/runs/${run.id}/sign-off`, managerToken), run.id)).status).toBe(405);
  });

  it("refuses an out-of-date check with 409 check_out_of_date while GET and export.json show no verdict; signs off once re-checked; 409 run_signed_off after", async () => {
    const { run, check } = await checkedRunFor(lab, lab.technician);
    const release = holdRechecks();
    try {
      const patched = await call(runAction, req("PATCH", `/api/v1/runs/${run.id}`, techToken, { setRateRpm: 11 }), run.id);
      expect(patched.status).toBe(200);
      const refused = await signOff(run.id, managerToken);
      expect(refused.status).toBe(409);
      expect((await refused.json()).error).toMatchObject({
        code: "check_out_of_date",
        message: expect.stringMatching(/out of date \(changed since: set rate\)/),
      });

      const detail = await (await call(runLoader, req("GET", `/api/v1/runs/${run.id}`, techToken), run.id)).json();
      expect(detail).toMatchObject({
        verdict: null,
        latestTheoryCheck: null,
        checkStatus: "out_of_date",
        checkOutOfDate: { because: ["set rate"], recheckPending: true, checkId: check.id },
      });
      const exported = await (await call(exportLoader, req("GET", `/api/v1/runs/${run.id}/export.json`, techToken), run.id)).json();
      expect(exported).toMatchObject({ run: { verdict: null, checkStatus: "out_of_date" }, theoryCheck: null, theoryCheckInput: null });
    } finally {
      release();
    }
    await whenRechecksIdle();

    const fresh = await (await call(runLoader, req("GET", `/api/v1/runs/${run.id}`, techToken), run.id)).json();
    expect(fresh).toMatchObject({ checkStatus: "current", checkOutOfDate: null, latestTheoryCheck: { verdict: expect.any(String) } });
    expect(fresh.latestTheoryCheck.id).toBeGreaterThan(check.id);
    const ok = await signOff(run.id, managerToken);
    expect(ok.status).toBe(200);
    expect(await ok.json()).toMatchObject({ id: run.id, state: "signed_off", signedOffById: lab.manager.id });
    const again = await signOff(run.id, managerToken);
    expect(again.status).toBe(409);
    expect((await again.json()).error.code).toBe("run_signed_off");
  });

  it("answers 409 not_checked for a run never checked and 404 for no such run", async () => {
    const run = await createRun(runInput(lab), lab.technician);
    const res = await signOff(run.id, managerToken);
    expect(res.status).toBe(409);
    expect((await res.json()).error.code).toBe("not_checked");
    expect((await signOff(999999, managerToken)).status).toBe(404);
  });
});

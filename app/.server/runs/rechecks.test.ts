import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { Frame, migrate, Run, RunHistory, TheoryCheck, Track, TrackingJob, ViewSetup } from "../db";
import { sessionStorage } from "../auth/session";
import { setLabSetting } from "../settings";
import { stopTrackingQueue, whenTrackingIdle } from "../jobs/tracking-queue";
import { currentCheck } from "./current-check";
import { holdRechecks, inputsChanged, recheckSingleTrackChecks, recheckUnfingerprinted, whenRechecksIdle } from "./rechecks";
import { getRunDetail, getRunExport, signOffRun } from "./record";
import { listRuns } from "./queries";
import { checkedRunFor, runInput, seedRunLab, type RunLab } from "./testing";
import { updateRun } from "./service";
import { action as settingsAction } from "~/routes/settings/settings";
import { settingDefaults } from "~/lib/settings";

let lab: RunLab;
beforeAll(async () => {
  await migrate();
  lab = await seedRunLab();
});
afterAll(async () => {
  await whenTrackingIdle();
  await stopTrackingQueue();
});

async function managerCookie() {
  const session = await sessionStorage.getSession();
  session.set("userId", lab.manager.id);
  return (await sessionStorage.commitSession(session)).split(";")[0]!;
}

/** The settings page's form as a lab manager sends it, with the defaults but for the tolerance. */
async function saveTolerance(pct: number) {
  const body = new URLSearchParams(Object.entries({ ...settingDefaults, checkTolerancePct: pct }).map(([k, v]) => [k, String(v)]));
  const request = new Request("http://localhost/settings", {
    method: "POST",
    headers: { Cookie: await managerCookie(), "Content-Type": "application/x-www-form-urlencoded" },
    body,
  });
  return settingsAction({ request, params: {}, context: {} } as never);
}

const theoryRows = (runId: number) => RunHistory.findAll({ where: { runId, field: "theoryCheck" }, order: [["id", "ASC"]] });

describe("a change of the verdict tolerance", () => {
  it("withdraws every unsigned run's verdict at once and fits it again; a signed-off run keeps its signed verdict", async () => {
    // The table truly turns 2 % fast: within a 3 % tolerance it agrees, against 1 % it disagrees.
    const open = await checkedRunFor(lab, lab.technician, {}, 10.2);
    const signed = await checkedRunFor(lab, lab.technician, {}, 10.2);
    expect([open.check.verdict, signed.check.verdict]).toEqual(["agrees", "agrees"]);
    await signOffRun(signed.run.id, lab.manager);

    const release = holdRechecks();
    try {
      await saveTolerance(1);
      const stale = await currentCheck(open.run.id);
      expect(stale).toMatchObject({ status: "out_of_date", changed: ["verdict tolerance"] });
      expect((await Run.findByPk(open.run.id))!.verdict).toBeNull();
      const listed = await listRuns({ sort: "createdAt", dir: "desc", page: 1, pageSize: 100 });
      expect(listed.items.find((r) => r.id === open.run.id)!.verdict).toBeNull();
      expect(listed.items.find((r) => r.id === signed.run.id)!.verdict).toBe("agrees");
      const exported = (await getRunExport(open.run.id))!;
      expect([exported.run.verdict, exported.run.checkStatus, exported.theoryCheck]).toEqual([null, "out_of_date", null]);
      await expect(signOffRun(open.run.id, lab.manager)).rejects.toMatchObject({ status: 409, code: "check_out_of_date" });

      const kept = await getRunDetail(signed.run.id);
      expect(kept).toMatchObject({ verdict: "agrees", checkStatus: "current", latestTheoryCheck: { id: signed.check.id, verdict: "agrees" } });
    } finally {
      release();
    }
    await whenRechecksIdle();

    const refit = await currentCheck(open.run.id);
    expect(refit.status).toBe("current");
    expect(refit.check!.verdict).toBe("disagrees");
    expect((await Run.findByPk(open.run.id))!.verdict).toBe("disagrees");
    expect((await theoryRows(open.run.id)).map((r) => [r.oldValue, r.newValue]).at(-1)).toEqual([
      `#${open.check.id} agrees`,
      `#${refit.check!.id} disagrees (re-checked after a change of verdict tolerance)`,
    ]);
    // The signed run was not fitted again.
    expect(await TheoryCheck.count({ where: { runId: signed.run.id } })).toBe(1);
    expect((await Run.findByPk(signed.run.id))!.verdict).toBe("agrees");
    await setLabSetting("checkTolerancePct", settingDefaults.checkTolerancePct);
    await whenRechecksIdle();
  });
});

describe("a change the check does not read", () => {
  it("(water temperature, a tank with no calibrations) leaves the check current and its verdict shown", async () => {
    const { run, check } = await checkedRunFor(lab, lab.technician);
    await updateRun(run.id, runInput(lab, { tankId: lab.tank2.id, waterTemperatureC: 18 }), lab.technician);
    expect(await currentCheck(run.id)).toMatchObject({ status: "current", check: { id: check.id } });
    expect((await Run.findByPk(run.id))!.verdict).toBe(check.verdict);
  });
});

describe("new frames", () => {
  it("make the check out of date at once and start tracking again", async () => {
    const { run } = await checkedRunFor(lab, lab.technician);
    const before = await TrackingJob.max<number, TrackingJob>("id", { where: { runId: run.id } });
    const release = holdRechecks();
    try {
      // Three more frames arrive (the upload route calls inputsChanged after storing them).
      for (let i = 0; i < 3; i++) {
        await Frame.create({
          runId: run.id,
          position: i,
          originalName: `f${i}.png`,
          storedName: `missing-${run.id}-${i}.png`,
          thumbName: null,
          sha256: `${run.id}-${i}`.padEnd(64, "0"),
          format: "png",
          widthPx: 1280,
          heightPx: 720,
          sizeBytes: 1,
          timeS: null,
        });
      }
      await inputsChanged(run.id, lab.technician.id, "track");
      expect(await currentCheck(run.id)).toMatchObject({ status: "out_of_date", changed: ["frames"] });
      expect((await Run.findByPk(run.id))!.verdict).toBeNull();
      expect((await getRunDetail(run.id))!.checkOutOfDate).toMatchObject({ because: ["frames"], recheckPending: true });
    } finally {
      release();
    }
    await whenRechecksIdle();
    const job = await TrackingJob.findOne({ where: { runId: run.id }, order: [["id", "DESC"]] });
    expect(job!.id).toBeGreaterThan(before);
    expect(job!.requestedById).toBe(lab.technician.id);
  });
});

describe("checks made before fingerprints were kept", () => {
  /** A run as an earlier version left it: job and check without fingerprints. */
  async function legacyRun() {
    const { run, check } = await checkedRunFor(lab, lab.technician);
    await TrackingJob.update({ inputFingerprint: null }, { where: { runId: run.id } });
    await TheoryCheck.update({ inputFingerprint: null }, { where: { id: check.id } });
    return { run, check };
  }

  it("count as out of date, and at start are fitted again when the tracks postdate the frames and view setup; a signed-off one keeps its check", async () => {
    const open = await legacyRun();
    const signed = await checkedRunFor(lab, lab.technician);
    await signOffRun(signed.run.id, lab.manager);
    await TheoryCheck.update({ inputFingerprint: null }, { where: { runId: signed.run.id } });
    expect((await currentCheck(open.run.id)).status).toBe("out_of_date");

    // A third run whose view setup moved after its tracking: its tracks cannot be vouched for.
    const moved = await legacyRun();
    await ViewSetup.update({ centreXPx: 650, updatedAt: new Date(Date.now() + 5_000) }, { where: { runId: moved.run.id }, silent: true });

    expect(await recheckUnfingerprinted()).toBe(2);
    await whenRechecksIdle();
    const refit = await currentCheck(open.run.id);
    expect(refit.status).toBe("current");
    expect(refit.check!.id).toBeGreaterThan(open.check.id);
    expect(await currentCheck(signed.run.id)).toMatchObject({ status: "current", check: { id: signed.check.id } });
    expect(await TheoryCheck.count({ where: { runId: signed.run.id } })).toBe(1);
    expect((await currentCheck(moved.run.id)).status).toBe("out_of_date");
    expect((await Run.findByPk(moved.run.id))!.verdict).toBeNull();
    expect(await Track.count({ where: { runId: moved.run.id } })).toBe(1);
  });
});

describe("checks made when only the longest track was fitted", () => {
  it("are fitted again over every track at start on unsigned runs; a signed-off run keeps its signed check", async () => {
    const open = await checkedRunFor(lab, lab.technician, {}, 10);
    const signed = await checkedRunFor(lab, lab.technician, {}, 10);
    await signOffRun(signed.run.id, lab.manager);
    // As such a check was stored: one track's result, no per-track checks, a fingerprint over that one track.
    for (const c of [open.check, signed.check]) {
      const stored = JSON.parse(c.result) as Record<string, unknown>;
      delete stored.checks;
      delete stored.combination;
      await c.update({ result: JSON.stringify(stored), inputFingerprint: "fingerprint-over-the-longest-track-only" });
    }
    expect((await currentCheck(open.run.id)).status).toBe("out_of_date");

    expect(await recheckSingleTrackChecks()).toBe(1);
    await whenRechecksIdle();
    const refit = await currentCheck(open.run.id);
    expect(refit.status).toBe("current");
    expect(refit.check!.id).toBeGreaterThan(open.check.id);
    expect((JSON.parse(refit.check!.result) as { checks?: unknown[] }).checks?.length).toBeGreaterThan(0);
    expect(await currentCheck(signed.run.id)).toMatchObject({ status: "current", check: { id: signed.check.id } });
    // Once fitted over every track, nothing is left to redo.
    expect(await recheckSingleTrackChecks()).toBe(0);
  });
});

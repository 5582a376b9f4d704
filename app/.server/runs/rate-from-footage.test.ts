import { beforeAll, describe, expect, it } from "vitest";
import { RunHistory, Track, TrackingJob, User } from "../db";
import { sessionStorage } from "../auth/session";
import { smallLab } from "../test-support";
import { getLabSettings } from "../settings";
import { createRun } from "./service";
import { checkRun, storedCheck } from "./theory";
import { currentCheck, latestCheck } from "./current-check";
import { holdRechecks, whenRechecksIdle } from "./rechecks";
import { plainViewSetup } from "./testing";
import { trackingFingerprint, recordedInputs } from "./provenance";
import { tableRateSummary } from "./rate-from-footage";
import { action as settingsAction } from "~/routes/settings/settings";
import { settingDefaults } from "~/lib/settings";
import { rpmToRadPerS } from "~/lib/analysis/units";

let lab: Awaited<ReturnType<typeof smallLab>>;
let managerCookie = "";
let techCookie = "";
beforeAll(async () => {
  lab = await smallLab();
  const cookieFor = async (id: number) => {
    const s = await sessionStorage.getSession();
    s.set("userId", id);
    return (await sessionStorage.commitSession(s)).split(";")[0] ?? "";
  };
  managerCookie = await cookieFor(lab.manager.id);
  techCookie = await cookieFor((await User.findByPk(lab.tech.id))!.id);
});

const centre = { x: 320, y: 240 };
const pxPerM = 800;
const trueRpm = 10.4; // 4 % fast on a set rate of 10 rpm

function inertialTrack(rpm: number, seconds = 6, fps = 30) {
  const f = 2 * rpmToRadPerS(rpm);
  return Array.from({ length: seconds * fps }, (_, i) => {
    const t = i / fps;
    return [t, centre.x + (0.02 + 0.07 * Math.cos(-f * t + 0.3)) * pxPerM, centre.y - (-0.01 + 0.07 * Math.sin(-f * t + 0.3)) * pxPerM, i];
  });
}

/** A run tracked by a job that read the table's rate from its frames, 4 % off the set rate. */
async function trackedRun() {
  const run = await createRun(lab.runInput({ setRateRpm: 10 }), lab.tech);
  await plainViewSetup(run, lab.tech.id, { centre, pxPerM });
  const job = await TrackingJob.create({
    runId: run.id,
    requestedById: lab.tech.id,
    state: "done",
    framesTotal: 180,
    framesDone: 180,
    error: null,
    startedAt: new Date(),
    finishedAt: new Date(),
    inputFingerprint: await trackingFingerprint(run),
    measuredOmega: rpmToRadPerS(trueRpm),
    measuredOmegaSe: rpmToRadPerS(0.01),
    measuredOmegaMethod: "surroundings",
    measuredOmegaPoints: 180,
    measuredOmegaNote: null,
  });
  const points = inertialTrack(trueRpm);
  await Track.create({ runId: run.id, jobId: job.id, number: 1, points: JSON.stringify(points), pointCount: points.length, detectedShare: 1, jitterPx: 0 });
  await run.update({ state: "tracked" });
  return run;
}

async function postSettings(cookie: string, over: Record<string, string>) {
  const body = new URLSearchParams({ ...Object.fromEntries(Object.entries(settingDefaults).map(([k, v]) => [k, String(v)])), ...over });
  const request = new Request("http://localhost/settings", { method: "POST", headers: { Cookie: cookie }, body });
  try {
    return await settingsAction({ request, params: {}, context: {} } as never);
  } catch (thrown) {
    return thrown;
  }
}

describe("the rate read from the footage, on the run page and in the check", () => {
  it("is shown beside the set rate, flagged when it disagrees, stored with the check, and used once the lab manager chooses it", async () => {
    const run = await trackedRun();
    await checkRun(run.id, lab.tech.id);
    const first = storedCheck((await currentCheck(run.id)).check!);
    // Default setting: the set rate (no calibration) decides, and the 4 % shows as a disagreement.
    expect(first.rate?.used).toBe("set rate");
    expect(first.rate?.setting).toBe("calibrated");
    expect(first.result.verdict).toBe("disagrees");
    expect(first.rate?.disagreement).toBe(
      "The table turned at 10.400 ± 0.010 rpm, not the set 10 rpm (beyond its 1 % tolerance and the measurement's 95 % uncertainty), by the surroundings in the frames.",
    );
    const inputs = recordedInputs((await latestCheck(run.id))!) as { rate?: { setting: string; fromFootage: boolean; measured: { omega: number } } };
    expect(inputs.rate).toMatchObject({ setting: "calibrated", fromFootage: false });
    expect(inputs.rate!.measured.omega).toBeCloseTo(rpmToRadPerS(trueRpm), 12);

    const summary = await tableRateSummary(run);
    expect(summary.setRpm).toBe(10);
    expect(summary.calibrated).toBeNull();
    expect(summary.measured).toMatchObject({ method: "surroundings", frames: 180, sameSense: true });
    expect(summary.measured!.rpm).toBeCloseTo(trueRpm, 9);
    expect(summary.disagreement).toBe(first.rate?.disagreement);

    // Only a lab manager may change it.
    const refused = await postSettings(techCookie, { rateSource: "footage" });
    expect(refused instanceof Response ? refused.status : (refused as { init?: ResponseInit }).init?.status).toBe(403);
    expect((await getLabSettings()).rateSource).toBe("calibrated");

    // The lab manager switches to the footage's rate: the check goes out of date at once, then is fitted again with it.
    const release = holdRechecks();
    try {
      await postSettings(managerCookie, { rateSource: "footage" });
      expect((await getLabSettings()).rateSource).toBe("footage");
      const stale = await currentCheck(run.id);
      expect(stale.status).toBe("out_of_date");
      expect(stale.changed).toEqual(["rate used (lab setting)"]);
    } finally {
      release();
    }
    await whenRechecksIdle();
    const second = storedCheck((await currentCheck(run.id)).check!);
    expect(second.id).not.toBe(first.id);
    expect(second.rate?.used).toBe("rate from the footage");
    expect(second.result.verdict).toBe("agrees");
    expect(second.result.fPredicted!).toBeCloseTo(2 * rpmToRadPerS(trueRpm), 9);
    expect(second.result.reason).not.toMatch(/rate calibration/);
    const history = await RunHistory.findAll({ where: { runId: run.id, field: "theoryCheck" }, order: [["id", "ASC"]] });
    expect(history.at(-1)?.newValue).toMatch(/re-checked after a change of rate used \(lab setting\)/);

    // And back: the default setting again puts the set rate in charge.
    await postSettings(managerCookie, { rateSource: "calibrated" });
    await whenRechecksIdle();
    expect(storedCheck((await currentCheck(run.id)).check!).rate?.used).toBe("set rate");
  });
});

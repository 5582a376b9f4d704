import { beforeAll, describe, expect, it } from "vitest";
import { Equipment, Run, Track } from "../db";
import { smallLab } from "../test-support";
import { createRun } from "./service";
import { checkRun, rateInForce, storedCheck } from "./theory";
import { currentCheck } from "./current-check";
import { doneTrackingJob, plainViewSetup } from "./testing";
import { createCalibration, signOffCalibration, toDayString } from "../calibrations";
import { rpmToRadPerS } from "~/lib/analysis/units";

let lab: Awaited<ReturnType<typeof smallLab>>;
let meter: Equipment;
beforeAll(async () => {
  lab = await smallLab();
  meter = await Equipment.create({ kind: "rate_meter", name: "Theory test tachometer", meterType: "tachometer" } as never);
});

const centre = { x: 320, y: 240 };
const pxPerM = 800;

/** A float on an inertial circle at the table's true rate, as a co-rotating camera sees it (image px). */
function inertialTrack(trueRpm: number, seconds = 6, fps = 30) {
  const f = 2 * rpmToRadPerS(trueRpm);
  const points: [number, number, number, number][] = [];
  for (let i = 0; i < seconds * fps; i++) {
    const t = i / fps;
    const x = 0.02 + 0.07 * Math.cos(-f * t + 0.3);
    const y = -0.01 + 0.07 * Math.sin(-f * t + 0.3);
    points.push([t, centre.x + x * pxPerM, centre.y - y * pxPerM, i]);
  }
  return points;
}

async function runWithTrack(trueRpm: number) {
  const run = await createRun(lab.runInput({ setRateRpm: 10 }), lab.tech);
  await plainViewSetup(run, lab.tech.id, { centre, pxPerM });
  const job = await doneTrackingJob(run, lab.tech.id, 180);
  const points = inertialTrack(trueRpm);
  await Track.create({ runId: run.id, jobId: job.id, number: 1, points: JSON.stringify(points), pointCount: points.length, detectedShare: 1, jitterPx: 0 });
  await run.update({ state: "tracked" });
  return run;
}

async function checkNow(runId: number) {
  const { check } = await currentCheck(runId);
  return check ? storedCheck(check) : null;
}

describe("the theory check uses the rate calibration in force when the run was logged", () => {
  it("a table that turns 5 % fast disagrees on the set rate, and agrees once its signed rate calibration is in force", async () => {
    // Before any calibration: the set rate is all there is, and the 5 % error shows.
    const before = await runWithTrack(10.5);
    await checkRun(before.id, lab.tech.id);
    const uncalibrated = await checkNow(before.id);
    expect(uncalibrated!.result.omegaSource).toBe("set rate, uncalibrated");
    expect(uncalibrated!.result.verdict).toBe("disagrees");

    // The rate meter reads 1.05 × set (a slipping drive corrected at the motor would look the same).
    const readings = [5, 10, 15, 20].map((s, i) => ({ setRpm: s, measuredRpm: 1.05 * s + (i % 2 ? 0.004 : -0.004) }));
    const cal = await createCalibration(
      { kind: "rate", equipmentId: lab.table.id, meterId: meter.id, performedOn: toDayString(new Date(Date.now() - 86_400_000)), readings } as never,
      lab.tech,
    );
    await signOffCalibration(cal.id, lab.manager);

    // The earlier run keeps what was in force when it was logged: nothing.
    expect(await rateInForce((await Run.findByPk(before.id))!)).toBeNull();

    const after = await runWithTrack(10.5);
    const rate = await rateInForce(after);
    expect(rate?.calibrationId).toBe(cal.id);
    expect(rate!.value).toBeCloseTo(rpmToRadPerS(10.5), 3);
    expect(rate!.stdError).toBeGreaterThan(0);
    await checkRun(after.id, lab.tech.id);
    const calibrated = await checkNow(after.id);
    expect(calibrated!.result.omegaSource).toBe("rate calibration");
    expect(calibrated!.result.calibrationId).toBe(cal.id);
    expect(calibrated!.result.verdict).toBe("agrees");
    expect(calibrated!.result.fPredicted!).toBeCloseTo(2 * rpmToRadPerS(10.5), 3);
  });
});

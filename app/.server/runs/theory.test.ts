import { beforeAll, describe, expect, it } from "vitest";
import { Equipment, Run, TheoryCheck, Track } from "../db";
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

/** A float on an inertial circle at the table's true rate, as a co-rotating camera sees it (image px), with a little tracking noise. */
function inertialTrack(trueRpm: number, seconds = 6, fps = 30, { cx = 0.02, cy = -0.01, phase = 0.3, noisePx = 0 } = {}) {
  const f = 2 * rpmToRadPerS(trueRpm);
  const points: [number, number, number, number][] = [];
  for (let i = 0; i < seconds * fps; i++) {
    const t = i / fps;
    // A fixed, deterministic jitter: enough for the fit to see noise, the same on every run of the test.
    const jitter = noisePx * Math.sin(12.9898 * i + 78.233 * phase);
    const x = cx + 0.07 * Math.cos(-f * t + phase) + jitter / pxPerM;
    const y = cy + 0.07 * Math.sin(-f * t + phase) - jitter / pxPerM;
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

describe("every track of a run is checked", () => {
  async function runWithTracks(tracks: [number, number, number, number][][]) {
    const run = await createRun(lab.runInput({ setRateRpm: 10 }), lab.tech);
    await plainViewSetup(run, lab.tech.id, { centre, pxPerM });
    const job = await doneTrackingJob(run, lab.tech.id, 180);
    for (const [i, points] of tracks.entries()) {
      await Track.create({
        runId: run.id,
        jobId: job.id,
        number: i + 1,
        points: JSON.stringify(points),
        pointCount: points.length,
        detectedShare: 1,
        jitterPx: 0,
      });
    }
    await run.update({ state: "tracked" });
    await checkRun(run.id, lab.tech.id);
    return (await checkNow(run.id))!;
  }

  it("a float that turned 8 % faster than the other two is flagged, the combined error widened, and the verdict taken on the combined f", async () => {
    const stored = await runWithTracks([
      inertialTrack(10, 6, 30, { noisePx: 0.3, phase: 0.3 }),
      inertialTrack(10.8, 6, 30, { noisePx: 0.3, phase: 1.1, cx: -0.03 }),
      inertialTrack(10, 6, 30, { noisePx: 0.3, phase: 2.2, cy: 0.02 }),
    ]);
    expect(stored.checks.map((c) => [c.trackNumber, c.combined, c.flagged])).toEqual([
      [1, true, false],
      [2, true, true],
      [3, true, false],
    ]);
    // Each track measures its own circle: float 2 its faster turning, within three of its standard errors.
    expect(Math.abs(stored.checks[1]!.fMeasured! - 2 * rpmToRadPerS(10.8))).toBeLessThan(3 * stored.checks[1]!.fStdError!);
    expect(Math.abs(stored.checks[0]!.fMeasured! - 2 * rpmToRadPerS(10))).toBeLessThan(3 * stored.checks[0]!.fStdError!);
    const c = stored.combination!;
    expect([c.n, c.of, c.consistent]).toEqual([3, 3, false]);
    expect(c.scale).toBeGreaterThan(1);
    expect(stored.result.fStdError!).toBeCloseTo(c.stdError * c.scale, 12);
    expect(stored.result.reason).toMatch(/^Float 2 disagrees with the others beyond its error/);
    // The run's verdict is the combined one, not any single track's.
    const row = (await TheoryCheck.findByPk(stored.id))!;
    expect(row.verdict).toBe(stored.result.verdict);
    expect(row.fMeasuredPerS).toBe(stored.result.fMeasured);
    expect(stored.input.tracks!.map((t) => t.number)).toEqual([1, 2, 3]);
  });

  it("a check stored before every track was checked still reads: its one result is its only per-track check", async () => {
    const run = await runWithTrack(10);
    await checkRun(run.id, lab.tech.id);
    const row = (await currentCheck(run.id)).check!;
    const parsed = JSON.parse(row.result) as { result: unknown; input: Record<string, unknown> };
    const { trackNumber: _n, tracks: _t, ...oldInput } = parsed.input;
    await row.update({ result: JSON.stringify({ result: parsed.result, input: oldInput }) });
    const old = storedCheck(row);
    expect(old.combination).toBeNull();
    expect(old.checks).toHaveLength(1);
    expect(old.checks[0]).toMatchObject({ trackNumber: null, combined: true, verdict: old.result.verdict, fMeasured: old.result.fMeasured });
    expect(old.checks[0]).not.toHaveProperty("series");
  });
});

import { beforeAll, describe, expect, it } from "vitest";
import { Track } from "../db";
import { smallLab } from "../test-support";
import { createRun } from "./service";
import { checkRun, storedCheck } from "./theory";
import { currentCheck } from "./current-check";
import { doneTrackingJob, plainViewSetup } from "./testing";
import { getRunExport } from "./record";
import { tracksCsv } from "./exports";
import { createCalibration, signOffCalibration, toDayString } from "../calibrations";
import { rpmToRadPerS } from "~/lib/analysis/units";

let lab: Awaited<ReturnType<typeof smallLab>>;
beforeAll(async () => {
  lab = await smallLab();
});

const centre = { x: 320, y: 240 };
/** The camera's true scale, as the scale calibration measures it. */
const TRUE_PX_PER_M = 800;
const NOMINAL_FPS = 30;
/** The camera's clock runs 2 % fast: 30.6 frames per reference second, stamped 1/30 s apart. */
const TRUE_FPS = 30.6;
const SET_RPM = 10;

/** A float on an inertial circle at the set rate, seen by a co-rotating camera, frames stamped by its own clock. */
function fastClockTrack(seconds = 6) {
  const f = 2 * rpmToRadPerS(SET_RPM);
  const points: [number, number, number, number][] = [];
  for (let i = 0; i < seconds * TRUE_FPS; i++) {
    const tTrue = i / TRUE_FPS;
    const x = 0.02 + 0.07 * Math.cos(-f * tTrue + 0.3);
    const y = -0.01 + 0.07 * Math.sin(-f * tTrue + 0.3);
    points.push([i / NOMINAL_FPS, centre.x + x * TRUE_PX_PER_M, centre.y - y * TRUE_PX_PER_M, i]);
  }
  return points;
}

async function runWithTrack(setupPxPerM: number | null) {
  const run = await createRun(lab.runInput({ setRateRpm: SET_RPM, frameRateFps: NOMINAL_FPS }), lab.tech);
  await plainViewSetup(run, lab.tech.id, { centre, pxPerM: setupPxPerM });
  // The job is recorded after the view setup, as the queue would: its tracks count as made from the present inputs.
  const job = await doneTrackingJob(run, lab.tech.id, 180);
  const points = fastClockTrack();
  await Track.create({ runId: run.id, jobId: job.id, number: 1, points: JSON.stringify(points), pointCount: points.length, detectedShare: 1, jitterPx: 0 });
  await run.update({ state: "tracked" });
  await checkRun(run.id, lab.tech.id);
  const { check } = await currentCheck(run.id);
  if (!check) throw new Error("the run's check is not current");
  return { run, check: storedCheck(check) };
}

const yesterday = () => toDayString(new Date(Date.now() - 86_400_000));

describe("the timing check and scale calibration frozen on a run are applied, or said not to be", () => {
  const truth = 2 * rpmToRadPerS(SET_RPM);
  let timingId: number;
  let scaleId: number;

  it("before any camera calibration: f is ~2 % low on a camera clock 2 % fast, and the provenance says nothing was applied", async () => {
    const { check } = await runWithTrack(TRUE_PX_PER_M);
    const r = check.result;
    expect(r.frameTimeFactor).toBeNull();
    expect(Math.abs(r.fMeasured! - truth / 1.02)).toBeLessThan(1.96 * r.fStdError!);
    expect(Math.abs(r.fMeasured! - truth)).toBeGreaterThan(1.96 * r.fStdError!);
    expect(r.calibrationsApplied.map((c) => c.use)).toEqual(["none", "none", "none"]);
    expect(r.calibrationsApplied.find((c) => c.kind === "timing")!.text).toContain("no timing check in force");
  });

  it("with a signed timing check (30 nominal, 30.6 true) and scale calibration in force, f is within its error of the truth and a 5 % scale difference is flagged", async () => {
    const timing = await createCalibration(
      {
        kind: "timing",
        equipmentId: lab.camera.id,
        performedOn: yesterday(),
        nominalFrameRateFps: NOMINAL_FPS,
        frameIntervals: 612,
        frameIntervalsUncertainty: 0.5,
        referenceElapsedS: 20,
        referenceElapsedUncertaintyS: 0.005,
      } as never,
      lab.tech,
    );
    const scale = await createCalibration(
      {
        kind: "scale",
        equipmentId: lab.camera.id,
        performedOn: yesterday(),
        knownLengthMm: 500,
        knownLengthUncertaintyMm: 0.5,
        lengthPx: 400,
        lengthUncertaintyPx: 0.5,
      } as never,
      lab.tech,
    );
    await signOffCalibration(timing.id, lab.manager);
    await signOffCalibration(scale.id, lab.manager);
    timingId = timing.id;
    scaleId = scale.id;

    const { run, check } = await runWithTrack(TRUE_PX_PER_M * 1.05);
    const r = check.result;
    expect(r.frameTimeFactor).toBeCloseTo(NOMINAL_FPS / TRUE_FPS, 12);
    expect(Math.abs(r.fMeasured! - truth)).toBeLessThan(1.96 * r.fStdError!);
    expect(r.fStdErrorTiming).toBeGreaterThan(0);
    expect(r.verdict).toBe("agrees");

    const timingEntry = r.calibrationsApplied.find((c) => c.kind === "timing")!;
    expect(timingEntry).toMatchObject({ calibrationId: timingId, use: "applied" });
    expect(timingEntry.text).toMatch(new RegExp(`^timing check #${timingId}: frame times × 0\\.98039 `));
    const scaleEntry = r.calibrationsApplied.find((c) => c.kind === "scale")!;
    expect(scaleEntry).toMatchObject({ calibrationId: scaleId, use: "flagged" });
    expect(scaleEntry.text).toContain("by 5 % (tolerance 1 %)");
    // Flagged, not replaced: the check kept the view setup's own scale.
    expect(check.input.setup.pxPerM).toBeCloseTo(TRUE_PX_PER_M * 1.05, 9);

    const exported = await getRunExport(run.id);
    expect(exported!.calibrationsApplied).toEqual(r.calibrationsApplied);
    const file = JSON.stringify(exported);
    expect(file).toContain(timingEntry.text);
    expect(file).toContain(scaleEntry.text);
  });

  it("a view setup without a scale takes the scale calibration's, so lengths come out in metres", async () => {
    const { run, check } = await runWithTrack(null);
    const r = check.result;
    expect((await tracksCsv(run.id)).withMetres).toBe(true);
    expect(r.lengthUnit).toBe("m");
    expect(check.input.setup.pxPerM).toBeCloseTo(TRUE_PX_PER_M, 9);
    expect(r.circle!.radiusM!).toBeCloseTo(0.07, 3);
    expect(r.calibrationsApplied.find((c) => c.kind === "scale")).toMatchObject({ calibrationId: scaleId, use: "applied" });
  });
});

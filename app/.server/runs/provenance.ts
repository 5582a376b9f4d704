import crypto from "node:crypto";
import { Frame, Run, TheoryCheck, Track, TrackingJob, ViewSetup } from "../db";
import { getLabSettings } from "../settings";
import { calibrationSnapshot } from "./service";

/**
 * What a theory check is computed from, and the one answer to "is this run's check current?".
 * The inputs are written as canonical JSON (keys sorted) and hashed; a check stores the hash, and
 * it is current only while the run's present inputs hash to the same value.
 */

function canonical(value: unknown): string {
  if (value === undefined) return "null";
  if (value === null || typeof value !== "object") return JSON.stringify(value);
  if (value instanceof Date) return JSON.stringify(value.toISOString());
  if (Array.isArray(value)) return `[${value.map(canonical).join(",")}]`;
  const entries = Object.entries(value as Record<string, unknown>).sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
  return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonical(v)}`).join(",")}}`;
}

export const sha256 = (value: unknown) => crypto.createHash("sha256").update(canonical(value)).digest("hex");

/** What tracking reads: the frames (content and times), the view setup, the tracer and the frame rate. */
export async function trackingInputs(run: Run) {
  const [frames, setup] = await Promise.all([
    Frame.findAll({ where: { runId: run.id }, attributes: ["id", "position", "sha256", "timeS"], order: [["position", "ASC"]] }),
    ViewSetup.findOne({ where: { runId: run.id } }),
  ]);
  return {
    frames: { count: frames.length, digest: sha256(frames.map((f) => [f.id, f.position, f.sha256, f.timeS])) },
    viewSetup: setup
      ? {
          centre: [setup.centreXPx, setup.centreYPx],
          tankEdge: [setup.tankEdgeXPx, setup.tankEdgeYPx, setup.tankEdgeRPx],
          scalePxPerM: setup.scalePxPerM,
          mirrored: setup.mirrored,
        }
      : null,
    tracer: run.tracer,
    frameRateFps: run.frameRateFps,
    timingCalibrationIds: calibrationSnapshot(run).inForce.filter((c) => c.kind === "timing").map((c) => c.id),
  };
}

export async function trackingFingerprint(run: Run) {
  return sha256(await trackingInputs(run));
}

/** Everything the fit reads, beside the track itself: conditions, frozen calibrations, lab settings. */
export async function checkInputs(run: Run, track: Pick<Track, "id" | "pointCount" | "jobId"> | null) {
  const settings = await getLabSettings();
  const snapshot = calibrationSnapshot(run);
  return {
    conditions: {
      setRateRpm: run.setRateRpm,
      direction: run.direction,
      cameraMode: run.cameraMode,
      rateReachedAt: run.rateReachedAt?.toISOString() ?? null,
      tableId: run.tableId,
      cameraId: run.cameraId,
    },
    calibrations: { at: snapshot.at, ids: snapshot.inForce.map((c) => c.id).sort((a, b) => Number(a) - Number(b)) },
    settings: { checkTolerancePct: settings.checkTolerancePct },
    tracking: await trackingInputs(run),
    track: track ? { id: track.id, pointCount: track.pointCount, jobId: track.jobId } : null,
  };
}
export type CheckInputs = Awaited<ReturnType<typeof checkInputs>>;

async function longestTrack(runId: number) {
  return Track.findOne({ where: { runId }, attributes: ["id", "pointCount", "jobId"], order: [["pointCount", "DESC"]] });
}

/**
 * The fingerprint a check made now would carry, or null when the tracks on the run were made from
 * other frames or another view setup than the present ones (a fit of them vouches for nothing).
 */
export async function presentFingerprint(run: Run): Promise<{ fingerprint: string | null; inputs: CheckInputs }> {
  const track = await longestTrack(run.id);
  const inputs = await checkInputs(run, track);
  if (!track) return { fingerprint: null, inputs };
  const job = await TrackingJob.findByPk(track.jobId, { attributes: ["id", "inputFingerprint"] });
  const tracksArePresent = job?.inputFingerprint === sha256(inputs.tracking);
  return { fingerprint: tracksArePresent ? sha256(inputs) : null, inputs };
}

export type CheckState = "current" | "out_of_date" | "missing";

/** The run's current theory check: the latest one, only when it was computed from the run's present inputs. */
export async function currentCheck(runId: number): Promise<{ state: CheckState; check: TheoryCheck | null; latest: TheoryCheck | null }> {
  const run = await Run.findByPk(runId);
  const latest = await TheoryCheck.findOne({ where: { runId }, order: [["id", "DESC"]] });
  if (!run || !latest) return { state: "missing", check: null, latest: null };
  const { fingerprint } = await presentFingerprint(run);
  if (fingerprint && latest.inputFingerprint === fingerprint) return { state: "current", check: latest, latest };
  return { state: "out_of_date", check: null, latest };
}

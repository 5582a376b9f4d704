import crypto from "node:crypto";
import type { Transaction } from "sequelize";
import { Equipment, Frame, type Run, type TheoryCheck, Track, TrackingJob, ViewSetup } from "../db";
import { getLabSettings } from "../settings";
import { calibrationSnapshot } from "./service";
import { footageRateOfJob, rateInputs } from "./rate-from-footage";

/**
 * What a theory check is computed from: the inputs written as canonical JSON (keys sorted) and
 * hashed. A check stores the hash and the inputs themselves; ./current-check compares them with
 * the run's present inputs. Each reader takes an optional transaction: one that decides on the
 * answer (sign-off) reads inside it.
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
export async function trackingInputs(run: Run, transaction?: Transaction) {
  const [frames, setup] = await Promise.all([
    Frame.findAll({ where: { runId: run.id }, attributes: ["id", "position", "sha256", "timeS"], order: [["position", "ASC"]], transaction }),
    ViewSetup.findOne({ where: { runId: run.id }, transaction }),
  ]);
  return {
    frames: { count: frames.length, digest: sha256(frames.map((f) => [f.id, f.position, f.sha256, f.timeS])) },
    viewSetup: setup
      ? {
          centre: [setup.centreXPx, setup.centreYPx],
          tankEdge: [setup.tankEdgeXPx, setup.tankEdgeYPx, setup.tankEdgeRPx],
          scalePxPerM: setup.scalePxPerM,
          mirrored: setup.mirrored,
          // Only when marked, so setups without one keep the fingerprints they had.
          ...(setup.rateMarkXPx !== null && setup.rateMarkYPx !== null ? { rateMark: [setup.rateMarkXPx, setup.rateMarkYPx] } : {}),
        }
      : null,
    tracer: run.tracer,
    frameRateFps: run.frameRateFps,
    cameraId: run.cameraId,
  };
}

export async function trackingFingerprint(run: Run, transaction?: Transaction) {
  return sha256(await trackingInputs(run, transaction));
}

/**
 * Everything the fit reads beside the track: the run's conditions, the table's flatness, the
 * whole frozen calibration snapshot (so a calibration of any kind the fit comes to apply is
 * already covered) and the lab's tolerance.
 */
export type TrackKey = Pick<Track, "id" | "number" | "pointCount" | "jobId">;

export async function checkInputs(run: Run, tracks: readonly TrackKey[], transaction?: Transaction) {
  const [settings, table, footage] = await Promise.all([
    getLabSettings(transaction),
    Equipment.findByPk(run.tableId, { attributes: ["id", "flatTable"], transaction }),
    // Every track of a run comes from one tracking job, whose pass also read the rate from the footage.
    footageRateOfJob(tracks[0]?.jobId, transaction),
  ]);
  const rate = rateInputs(settings.rateSource, footage.measured);
  return {
    conditions: {
      setRateRpm: run.setRateRpm,
      direction: run.direction,
      cameraMode: run.cameraMode,
      rateReachedAt: run.rateReachedAt?.toISOString() ?? null,
      tableId: run.tableId,
      flatTable: Boolean(table?.flatTable),
    },
    calibrations: calibrationSnapshot(run),
    settings: { checkTolerancePct: settings.checkTolerancePct },
    tracking: await trackingInputs(run, transaction),
    // Every track is fitted, so every track is an input: by id, number, length and the job that made it.
    tracks: tracks.map((t) => ({ id: t.id, number: t.number, pointCount: t.pointCount, jobId: t.jobId })),
    ...(rate ? { rate } : {}),
  };
}
export type CheckInputs = Awaited<ReturnType<typeof checkInputs>>;

/** The words a person knows for each input, in the order they are listed. */
const inputWords: [path: string, words: string][] = [
  ["conditions.setRateRpm", "set rate"],
  ["conditions.direction", "direction"],
  ["conditions.cameraMode", "camera mode"],
  ["conditions.rateReachedAt", "rate reached time"],
  ["conditions.tableId", "table"],
  ["conditions.flatTable", "table's flatness"],
  ["calibrations", "calibrations in force"],
  ["settings.checkTolerancePct", "verdict tolerance"],
  ["rate.setting", "rate used (lab setting)"],
  ["rate.measured", "rate measured from the footage"],
  ["tracking.frames", "frames"],
  ["tracking.viewSetup", "view setup"],
  ["tracking.tracer", "tracer"],
  ["tracking.frameRateFps", "frame rate"],
  ["tracking.cameraId", "camera"],
  ["tracks", "tracks"],
];

function at(value: unknown, path: string): unknown {
  return path.split(".").reduce<unknown>((v, k) => (v && typeof v === "object" ? (v as Record<string, unknown>)[k] : undefined), value);
}

/** Which inputs differ between two sets, in words ("set rate", "view setup"); all of them when the old set is unknown. */
export function changedInputs(before: unknown, after: CheckInputs): string[] {
  if (!before || typeof before !== "object") return ["inputs not recorded with the earlier check"];
  // The tracks follow from the tracking inputs: name them only when nothing upstream of them changed.
  const changed = inputWords.filter(([path]) => canonical(at(before, path)) !== canonical(at(after, path))).map(([, w]) => w);
  return changed.length > 1 ? changed.filter((w) => w !== "tracks") : changed;
}

/** The run's tracks in their numbering order (see runTracks in ./theory): what a check fits. */
export async function trackKeys(runId: number, transaction?: Transaction): Promise<TrackKey[]> {
  return Track.findAll({
    where: { runId },
    attributes: ["id", "number", "pointCount", "jobId"],
    order: [
      ["number", "ASC"],
      ["id", "ASC"],
    ],
    transaction,
  });
}

/**
 * The fingerprint a check of `tracks` (all the run's, by default) made now would carry, or null when
 * there are none or any of them was made from other frames or another view setup than the present
 * ones: a fit of it vouches for nothing.
 */
export async function presentFingerprint(
  run: Run,
  tracks?: readonly TrackKey[],
  transaction?: Transaction,
): Promise<{ fingerprint: string | null; inputs: CheckInputs }> {
  const used = tracks ?? (await trackKeys(run.id, transaction));
  const inputs = await checkInputs(run, used, transaction);
  if (!used.length) return { fingerprint: null, inputs };
  const jobIds = [...new Set(used.map((t) => t.jobId))];
  const jobs = await TrackingJob.findAll({ where: { id: jobIds }, attributes: ["id", "inputFingerprint"], transaction });
  const tracking = sha256(inputs.tracking);
  const tracksArePresent = jobs.length === jobIds.length && jobs.every((job) => job.inputFingerprint === tracking);
  return { fingerprint: tracksArePresent ? sha256(inputs) : null, inputs };
}

/** The run history's entry for a new check: old verdict → new verdict, and which inputs changed. */
export function checkHistoryValues(previous: TheoryCheck | null, check: Pick<TheoryCheck, "id" | "verdict">, inputs: CheckInputs) {
  if (!previous) return { oldValue: null, newValue: `#${check.id} ${check.verdict}` };
  const changed = changedInputs(recordedInputs(previous), inputs);
  const why = changed.length ? `re-checked after a change of ${changed.join(", ")}` : "checked again, nothing changed";
  return { oldValue: `#${previous.id} ${previous.verdict}`, newValue: `#${check.id} ${check.verdict} (${why})` };
}

/** The inputs a stored check recorded (see checkRun), or null for a check made before they were kept. */
export function recordedInputs(check: Pick<TheoryCheck, "result">): unknown {
  try {
    return (JSON.parse(check.result) as { provenance?: { inputs?: unknown } }).provenance?.inputs ?? null;
  } catch {
    return null;
  }
}

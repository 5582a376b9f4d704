import type { Transaction } from "sequelize";
import { Equipment, Frame, Run, RunHistory, locking, sequelize } from "../db";
import type { RunInput } from "~/lib/validation/run";
import type { CurrentUser } from "../auth/permissions";
import type { RunState } from "~/lib/runs";
import { calibrationsInForce, calibrationsPastDueAt, type CalibrationInForce, type PastDueAtRun } from "../calibrations-in-force";
import { formatNumber } from "~/lib/number-format";

export interface CalibrationSnapshot {
  at: string | null;
  inForce: CalibrationInForce[];
  pastDue: PastDueAtRun[];
}

/** The calibrations stored with a run when it was logged. */
export function calibrationSnapshot(run: Pick<Run, "calibrationsInForce">): CalibrationSnapshot {
  try {
    const parsed = run.calibrationsInForce ? (JSON.parse(run.calibrationsInForce) as Partial<CalibrationSnapshot> | CalibrationSnapshot["inForce"]) : null;
    if (Array.isArray(parsed)) return { at: null, inForce: parsed, pastDue: [] };
    if (parsed && typeof parsed === "object") return { at: parsed.at ?? null, inForce: parsed.inForce ?? [], pastDue: parsed.pastDue ?? [] };
  } catch {
    // an unreadable snapshot counts as none
  }
  return { at: null, inForce: [], pastDue: [] };
}

export class RunError extends Error {
  constructor(
    message: string,
    readonly status = 400,
    readonly field?: string,
    readonly code = "invalid_run",
  ) {
    super(message);
  }
}

async function checkEquipment(input: RunInput, transaction?: Transaction) {
  const byId = (id: number) => Equipment.findByPk(id, { transaction });
  const [table, tank, camera] = await Promise.all([byId(input.tableId), byId(input.tankId), byId(input.cameraId)]);
  const problems: { field: string; message: string }[] = [];
  const expect = (item: Equipment | null, kind: string, field: string, word: string) => {
    if (!item || item.kind !== kind) problems.push({ field, message: `Choose a ${word} from the register.` });
    else if (item.status !== "in_service") problems.push({ field, message: `${item.name} is ${item.status.replace(/_/g, " ")}; choose one in service.` });
  };
  expect(table, "table", "tableId", "table");
  expect(tank, "tank", "tankId", "tank");
  expect(camera, "camera", "cameraId", "camera");
  if (table?.maxRateRpm && input.setRateRpm > table.maxRateRpm) {
    problems.push({
      field: "setRateRpm",
      message: `${table.name} is rated to ${formatNumber(table.maxRateRpm, 6)} rpm; ${formatNumber(input.setRateRpm, 6)} rpm is above its maximum.`,
    });
  }
  if (tank?.depthM && input.waterDepthCm / 100 > tank.depthM) {
    problems.push({
      field: "waterDepthCm",
      message: `${tank.name} is ${formatNumber(tank.depthM * 100, 6)} cm deep; ${formatNumber(input.waterDepthCm, 6)} cm of water would overflow it.`,
    });
  }
  if (table?.diameterM && tank?.diameterM && tank.diameterM > table.diameterM * 1.05) {
    problems.push({
      field: "tankId",
      message: `${tank.name} (${formatNumber(tank.diameterM * 100, 6)} cm) is wider than ${table.name} (${formatNumber(table.diameterM * 100, 6)} cm).`,
    });
  }
  return { table, tank, camera, problems };
}

export type FieldProblems = { field: string; message: string }[];

export class RunValidationError extends Error {
  constructor(readonly problems: FieldProblems) {
    super(problems.map((p) => p.message).join(" "));
  }
}

function columns(input: RunInput) {
  return {
    tableId: input.tableId,
    tankId: input.tankId,
    cameraId: input.cameraId,
    setRateRpm: input.setRateRpm,
    direction: input.direction,
    waterDepthM: input.waterDepthCm / 100,
    waterTemperatureC: input.waterTemperatureC,
    rateReachedAt: input.rateReachedAt ?? null,
    cameraMode: input.cameraMode,
    frameRateFps: input.frameRateFps,
    tracer: input.tracer,
    purpose: input.purpose,
    notes: input.notes ?? null,
  };
}

/** Fields the fit reads (a change re-runs the fit) and fields tracking reads (a change re-tracks). */
const fitFields = new Set(["setRateRpm", "direction", "cameraMode", "rateReachedAt", "tableId"]);
const trackFields = new Set(["tracer", "frameRateFps", "cameraId"]);
const equipmentFields = new Set(["tableId", "tankId", "cameraId"]);

/** Frozen with the run: later sign-offs or expiries do not change what this run was made under. */
async function freezeCalibrations(equipmentIds: number[], at: Date, transaction: Transaction) {
  const inForce = await calibrationsInForce(equipmentIds, at, transaction);
  const pastDue = await calibrationsPastDueAt(equipmentIds, at, transaction);
  return JSON.stringify({ at: at.toISOString(), inForce, pastDue });
}

function snapshotSummary(text: string | null) {
  const s = calibrationSnapshot({ calibrationsInForce: text });
  const list = (xs: { id: number | string; kind: string }[]) => xs.map((c) => `${c.kind} #${c.id}`).join(", ") || "none";
  return `in force: ${list(s.inForce)}; past due: ${list(s.pastDue)}`;
}

/** A minute of clock skew between the person's clock and the server's is forgiven. */
const clockSkewMs = 60_000;

/** The table cannot have reached its rate in the future, nor after the frames were filmed (the first frame's arrival). */
async function assertRateReachedAtPossible(at: Date | undefined, runId?: number) {
  if (!at) return;
  if (at.getTime() > Date.now() + clockSkewMs) {
    throw new RunValidationError([
      { field: "rateReachedAt", message: "The rate reached time is in the future: give the time the table actually reached its rate." },
    ]);
  }
  if (runId) {
    const first = await Frame.findOne({ where: { runId }, order: [["createdAt", "ASC"]], attributes: ["createdAt"] });
    if (first && at.getTime() > first.createdAt.getTime()) {
      throw new RunValidationError([
        {
          field: "rateReachedAt",
          message: `The rate reached time is after the first frame arrived (${first.createdAt.toISOString()}): the table reached its rate before it was filmed, so give that earlier time.`,
        },
      ]);
    }
  }
}

/**
 * Logs a run. A correction (`supersedesId`, a signed-off run) starts with that run's frames (shared,
 * unless `leaveFramesOut`), its view setup and, when none is given, its rate reached time, and is
 * tracked at once when it has frames and a view setup (the check follows tracking).
 */
export async function createRun(input: RunInput, user: CurrentUser) {
  // A correction with the frames carried over has them from the start: its rate reached time comes before them too.
  await assertRateReachedAtPossible(input.rateReachedAt, input.leaveFramesOut ? undefined : input.supersedesId);
  const { problems } = await checkEquipment(input);
  if (input.leaveFramesOut && !input.supersedesId) {
    problems.push({ field: "leaveFramesOut", message: "Leaving the frames out applies only to a correction: a new run starts without frames anyway." });
  }
  if (problems.length) throw new RunValidationError(problems);
  const correction = input.supersedesId ? await import("./correction") : null;
  const created = await sequelize.transaction(async (transaction) => {
    const old = correction && input.supersedesId ? await correction.lockCorrected(input.supersedesId, transaction) : null;
    const rateReachedAt = input.rateReachedAt ?? old?.rateReachedAt ?? undefined;
    const at = rateReachedAt ?? new Date();
    const calibrations = await freezeCalibrations([input.tableId, input.tankId, input.cameraId], at, transaction);
    const run = await Run.create(
      {
        ...columns({ ...input, rateReachedAt }),
        technicianId: user.id,
        supersedesId: input.supersedesId ?? null,
        signedOffById: null,
        signedOffAt: null,
        calibrationsInForce: calibrations,
        verdict: null,
        frameWidthPx: null,
        frameHeightPx: null,
      },
      { transaction },
    );
    await RunHistory.create(
      { runId: run.id, userId: user.id, field: "created", oldValue: null, newValue: input.supersedesId ? `correction of run ${input.supersedesId}` : "logged" },
      { transaction },
    );
    const carried = old && correction ? await correction.carryOver(old, run, { frames: !input.leaveFramesOut, userId: user.id }, transaction) : null;
    return { run, carried };
  });
  const { run, carried } = created;
  if (carried && carried.frames >= 3 && carried.viewSetup) {
    // Nothing to upload or mark: track the correction now; the theory check follows the tracks as for any run.
    const { enqueueTracking } = await import("../jobs/tracking-queue");
    await enqueueTracking(run, user.id).catch((err) => console.error(`[runs] tracking of correction ${run.id} not queued:`, err));
  }
  return run;
}

export function canChangeRun(run: Run, user: CurrentUser) {
  if (run.state === "signed_off") return false;
  return user.role === "lab_manager" || (user.role === "technician" && run.technicianId === user.id);
}

export function assertCanChange(run: Run, user: CurrentUser) {
  if (run.state === "signed_off") {
    throw new RunError("This run is signed off and read-only. Log a correction as a new run linked to it.", 409, undefined, "run_signed_off");
  }
  if (!canChangeRun(run, user)) {
    throw new RunError("Only the technician who logged this run, or a lab manager, can change it.", 403, undefined, "forbidden");
  }
}

const show = (v: unknown) =>
  v === null || v === undefined
    ? null
    : v instanceof Date
      ? v.toISOString()
      : typeof v === "object"
        ? JSON.stringify(v)
        : (v as string | number | boolean | bigint).toString();

export async function updateRun(runId: number, input: RunInput, user: CurrentUser) {
  const run = await Run.findByPk(runId);
  if (!run) throw new RunError("No such run.", 404, undefined, "not_found");
  assertCanChange(run, user);
  const { problems } = await checkEquipment(input);
  if (problems.length) throw new RunValidationError(problems);
  await assertRateReachedAtPossible(input.rateReachedAt, runId);
  const next = columns(input);
  let changed: string[] = [];
  let snapshotChanged = false;
  let redo: "fit" | "track" | null = null;
  await sequelize.transaction(async (transaction) => {
    // Checked again holding the run's lock: a sign-off or another edit may have committed since the read above.
    await run.reload(locking(transaction));
    assertCanChange(run, user);
    const changes = Object.entries(next).filter(([k, v]) => show(run.get(k as keyof Run)) !== show(v));
    changed = changes.map(([k]) => k);
    for (const [field, value] of changes) {
      await RunHistory.create({ runId, userId: user.id, field, oldValue: show(run.get(field as keyof Run)), newValue: show(value) }, { transaction });
    }
    const refreeze = changed.some((k) => k === "rateReachedAt" || equipmentFields.has(k));
    // Without a rate reached time the run's time is when it was logged, as frozen then.
    const loggedAt = (!run.rateReachedAt && calibrationSnapshot(run).at) || run.createdAt.toISOString();
    const snapshot = refreeze
      ? await freezeCalibrations([next.tableId, next.tankId, next.cameraId], next.rateReachedAt ?? new Date(loggedAt), transaction)
      : null;
    snapshotChanged = snapshot !== null && snapshot !== run.calibrationsInForce;
    // The snapshot's time moves with the rate reached time; the history names only a change of which records apply.
    if (snapshot && snapshotSummary(snapshot) !== snapshotSummary(run.calibrationsInForce)) {
      await RunHistory.create(
        { runId, userId: user.id, field: "calibrationsInForce", oldValue: snapshotSummary(run.calibrationsInForce), newValue: snapshotSummary(snapshot) },
        { transaction },
      );
    }
    redo = changed.some((k) => trackFields.has(k)) ? "track" : snapshotChanged || changed.some((k) => fitFields.has(k)) ? "fit" : null;
    // The verdict in the runs table belongs to the old inputs: it goes until the re-check sets it again.
    if (changes.length)
      await run.update({ ...next, ...(snapshot ? { calibrationsInForce: snapshot } : {}), ...(redo ? { verdict: null } : {}) }, { transaction });
  });
  if (redo) await (await import("./rechecks")).inputsChanged(runId, user.id, redo);
  return run;
}

export async function setRunState(run: Run, state: RunState, userId: number | null, transaction?: Transaction) {
  if (run.state === state) return;
  await RunHistory.create({ runId: run.id, userId, field: "state", oldValue: run.state, newValue: state }, { transaction });
  await run.update({ state }, { transaction });
}

import { calibrationSnapshot } from "./service";
import { Op } from "sequelize";
import { Calibration, Equipment, Frame, Run, RunHistory, TheoryCheck, Track, TrackingJob, User, ViewSetup, locking, sequelize } from "../db";
import { codeVersion } from "../version";
import { serializeEquipment } from "../equipment";
import { RunError, setRunState } from "./service";
import { currentCheck, type CurrentCheck } from "./current-check";
import { recheckPending } from "./rechecks";
import type { CurrentUser } from "../auth/permissions";
import { runLabel, runStateLabels, type RunState } from "~/lib/runs";
import { runFieldLabels } from "~/lib/validation/run";
import { serializeJob } from "../jobs/tracking-queue";
import { serializeRunLink, serializeTheoryCheck, serializeTrackSummary, serializeViewSetup, storedCheckResult } from "./serialize";
import type { RunDetailView, RunHistoryEntryView, RunLinkView } from "../openapi/responses/runs";
import type { RunExportView } from "../openapi/responses/run-export";

/**
 * Sign-off vouches for a verdict, so it needs a current theory check: one made from the run's
 * present inputs (see currentCheck). The page's form and POST /api/v1/runs/:id/sign-off both come here.
 */
export async function signOffRun(runId: number, user: CurrentUser) {
  if (user.role !== "lab_manager") throw new RunError("Only a lab manager can sign a run off.", 403, undefined, "forbidden");
  // The run's row lock: an edit, a new frame or a re-check of this run commits before the check below or waits for the sign-off.
  return sequelize.transaction(async (transaction) => {
    const run = await Run.findByPk(runId, locking(transaction));
    if (!run) throw new RunError("No such run.", 404, undefined, "not_found");
    if (run.state === "signed_off") {
      throw new RunError(`${runLabel(run.id)} is already signed off.`, 409, undefined, "run_signed_off");
    }
    const current = await currentCheck(run, transaction);
    if (current.status === "out_of_date") {
      throw new RunError(
        `${runLabel(run.id)}'s theory check is out of date (changed since: ${current.changed.join(", ")}). Wait for the new check, then sign off.`,
        409,
        undefined,
        "check_out_of_date",
      );
    }
    if (run.state !== "checked") {
      throw new RunError(
        `${runLabel(run.id)} is ${runStateLabels[run.state as RunState].toLowerCase()}: only a run with a theory check can be signed off.`,
        409,
        undefined,
        "not_checked",
      );
    }
    if (current.status === "missing") {
      throw new RunError(`${runLabel(run.id)} has no theory check to sign off.`, 409, undefined, "check_out_of_date");
    }
    const at = new Date();
    await setRunState(run, "signed_off", user.id, transaction);
    await run.update({ signedOffById: user.id, signedOffAt: at }, { transaction });
    return run;
  });
}

export type RunHistoryEntry = RunHistoryEntryView;

const equipmentFields = new Set(["tableId", "tankId", "cameraId"]);
const extraLabels: Record<string, string> = {
  created: "logged",
  theoryCheck: "theory check",
  calibrationsInForce: "calibrations in force",
  frames: "frames",
  viewSetup: "view setup",
};

/** Every change to a run, oldest first, with ids turned into the names people know. */
export async function getRunHistory(runId: number): Promise<RunHistoryEntry[]> {
  const rows = await RunHistory.findAll({
    where: { runId },
    order: [
      ["createdAt", "ASC"],
      ["id", "ASC"],
    ],
  });
  const userIds = [...new Set(rows.map((r) => r.userId).filter((id): id is number => id !== null))];
  const equipmentIds = [
    ...new Set(
      rows
        .filter((r) => equipmentFields.has(r.field))
        .flatMap((r) => [r.oldValue, r.newValue])
        .filter(Boolean)
        .map(Number),
    ),
  ];
  const [users, equipment] = await Promise.all([
    userIds.length ? User.findAll({ where: { id: userIds }, attributes: ["id", "name"] }) : [],
    equipmentIds.length ? Equipment.findAll({ where: { id: equipmentIds }, attributes: ["id", "name"] }) : [],
  ]);
  const names = new Map(users.map((u) => [u.id, u.name]));
  const items = new Map(equipment.map((e) => [String(e.id), e.name]));
  const shown = (field: string, value: string | null) => {
    if (value === null) return null;
    if (equipmentFields.has(field)) return items.get(value) ?? `#${value}`;
    if (field === "state") return runStateLabels[value as RunState] ?? value;
    return value;
  };
  return rows.map((r): RunHistoryEntry => ({
    id: r.id,
    at: r.createdAt.toISOString(),
    who: r.userId === null ? null : { id: r.userId, name: names.get(r.userId) ?? `#${r.userId}` },
    field: r.field,
    fieldLabel: runFieldLabels[r.field] ?? extraLabels[r.field] ?? r.field,
    oldValue: shown(r.field, r.oldValue),
    newValue: shown(r.field, r.newValue),
  }));
}

export type RunLink = RunLinkView;
const link = serializeRunLink;

/** The run this one corrects, and the runs that correct it (newest first). */
export async function getSupersedesLinks(run: Pick<Run, "id" | "supersedesId">) {
  const [supersedes, supersededBy] = await Promise.all([
    run.supersedesId ? Run.findByPk(run.supersedesId, { attributes: ["id", "state", "createdAt"] }) : null,
    Run.findAll({ where: { supersedesId: run.id }, attributes: ["id", "state", "createdAt"], order: [["createdAt", "DESC"]] }),
  ]);
  return { supersedes: supersedes ? link(supersedes) : null, supersededBy: supersededBy.map(link) };
}

export interface SignOffView {
  state: RunState;
  signedOffAt: string | null;
  signedOffBy: { id: number; name: string } | null;
  /** The person asking may sign this run off now. */
  canSignOff: boolean;
  /** Why not, when they are a lab manager but the run is not ready. */
  blockedReason: string | null;
  /** The person asking may log a correction (technician or lab manager, run signed off). */
  canCorrect: boolean;
}

/** What <SignOffPanel> shows for this person; `current` saves asking currentCheck twice for one page. */
export async function getSignOffView(run: Run, user: CurrentUser, current?: CurrentCheck): Promise<SignOffView> {
  const by = run.signedOffById ? await User.findByPk(run.signedOffById, { attributes: ["id", "name"] }) : null;
  const isManager = user.role === "lab_manager";
  const status = run.state === "signed_off" ? "current" : (current ?? (await currentCheck(run))).status;
  const stale = run.state === "checked" && status !== "current";
  return {
    state: run.state,
    signedOffAt: run.signedOffAt?.toISOString() ?? null,
    signedOffBy: by ? { id: by.id, name: by.name } : null,
    canSignOff: isManager && run.state === "checked" && !stale,
    blockedReason:
      isManager && status === "out_of_date"
        ? "The theory check is out of date; sign-off waits for a check made from the run as it is now."
        : isManager && run.state !== "checked" && run.state !== "signed_off"
          ? `Sign-off needs a theory check; this run is ${runStateLabels[run.state as RunState].toLowerCase()}.`
          : isManager && stale
            ? "Sign-off needs a theory check; this run has none."
            : null,
    canCorrect: run.state === "signed_off" && (user.role === "lab_manager" || user.role === "technician"),
  };
}

/** Everything the run record's own panels need, in one call for the run page's loader. */
export async function getRunRecordParts(run: Run, user: CurrentUser, current?: CurrentCheck) {
  const [history, links, signOff] = await Promise.all([getRunHistory(run.id), getSupersedesLinks(run), getSignOffView(run, user, current)]);
  return { history, links, signOff };
}
export type RunRecordParts = Awaited<ReturnType<typeof getRunRecordParts>>;

/** Ids of the calibration records kept with the run when it was logged. */
export function calibrationIdsInForce(run: Pick<Run, "calibrationsInForce">): number[] {
  return calibrationSnapshot(run)
    .inForce.map((c) => Number(c.id))
    .filter((id) => Number.isInteger(id) && id > 0);
}

/** The run as GET /api/v1/runs/:id returns it, and the current check's row, which export.json reads the full result from. */
export async function getRunDetailWithCheck(
  runId: number,
  opts: { current?: CurrentCheck } = {},
): Promise<{ detail: RunDetailView; check: TheoryCheck | null } | null> {
  const run = await Run.findByPk(runId);
  if (!run) return null;
  const calibrationIds = calibrationIdsInForce(run);
  const [equipment, technician, signedOffBy, frameCount, setup, job, tracks, check, calibrations, history, links] = await Promise.all([
    Equipment.findAll({ where: { id: [run.tableId, run.tankId, run.cameraId] } }),
    User.findByPk(run.technicianId, { attributes: ["id", "name", "email"] }),
    run.signedOffById ? User.findByPk(run.signedOffById, { attributes: ["id", "name"] }) : null,
    Frame.count({ where: { runId } }),
    ViewSetup.findOne({ where: { runId } }),
    TrackingJob.findOne({
      where: { runId },
      order: [
        ["createdAt", "DESC"],
        ["id", "DESC"],
      ],
    }),
    Track.findAll({ where: { runId }, attributes: ["id", "number", "pointCount", "detectedShare", "jitterPx", "jobId"], order: [["number", "ASC"]] }),
    opts.current ?? currentCheck(run),
    calibrationIds.length ? Calibration.findAll({ where: { id: { [Op.in]: calibrationIds } } }) : [],
    getRunHistory(runId),
    getSupersedesLinks(run),
  ]);
  const byId = new Map(equipment.map((e) => [e.id, serializeEquipment(e)]));
  const now = Date.now();
  const detail: RunDetailView = {
    id: run.id,
    label: runLabel(run.id),
    state: run.state,
    verdict: check.status === "current" ? run.verdict : null,
    conditions: {
      setRateRpm: run.setRateRpm,
      direction: run.direction,
      waterDepthM: run.waterDepthM,
      waterTemperatureC: run.waterTemperatureC,
      rateReachedAt: run.rateReachedAt?.toISOString() ?? null,
      cameraMode: run.cameraMode,
      frameRateFps: run.frameRateFps,
      tracer: run.tracer,
    },
    purpose: run.purpose,
    notes: run.notes,
    equipment: { table: byId.get(run.tableId) ?? null, tank: byId.get(run.tankId) ?? null, camera: byId.get(run.cameraId) ?? null },
    technician: technician ? { id: technician.id, name: technician.name, email: technician.email } : null,
    frames: { count: frameCount, widthPx: run.frameWidthPx, heightPx: run.frameHeightPx },
    viewSetup: serializeViewSetup(setup),
    latestTrackingJob: serializeJob(job),
    tracks: { count: tracks.length, items: tracks.map(serializeTrackSummary) },
    // Only a check made from the run's present inputs is shown; a stale one is named, not shown.
    latestTheoryCheck: check.check ? serializeTheoryCheck(check.check) : null,
    checkStatus: check.status,
    checkOutOfDate:
      check.status === "out_of_date"
        ? {
            because: check.changed,
            recheckPending: recheckPending(run.id) || job?.state === "queued" || job?.state === "running",
            checkId: check.latest?.id ?? null,
          }
        : null,
    calibrationsInForce: {
      ids: calibrationIds,
      recorded: (({ at, inForce, pastDue }) => ({ at, inForce: inForce.map((c) => ({ ...c })), pastDue: pastDue.map((c) => ({ ...c })) }))(
        calibrationSnapshot(run),
      ),
      records: calibrations.map((c) => ({
        id: c.id,
        kind: c.kind,
        equipmentId: c.equipmentId,
        performedAt: c.performedAt.toISOString(),
        dueAt: c.dueAt.toISOString(),
        expired: c.dueAt.getTime() < now,
        passed: c.passed,
        signedOffAt: c.signedOffAt?.toISOString() ?? null,
      })),
    },
    signOff: { signedOffAt: run.signedOffAt?.toISOString() ?? null, signedOffBy: signedOffBy ? { id: signedOffBy.id, name: signedOffBy.name } : null },
    supersedes: links.supersedes,
    supersededBy: links.supersededBy,
    history,
    createdAt: run.createdAt.toISOString(),
    updatedAt: run.updatedAt.toISOString(),
  };
  return { detail, check: check.check };
}

/** The run as GET /api/v1/runs/:id returns it. */
export async function getRunDetail(runId: number, opts: { current?: CurrentCheck } = {}): Promise<RunDetailView | null> {
  return (await getRunDetailWithCheck(runId, opts))?.detail ?? null;
}
export type RunDetail = RunDetailView;

/** export.json: everything needed to reproduce the run's result, stamped with the code that made the file. */
export async function getRunExport(runId: number): Promise<RunExportView | null> {
  const found = await getRunDetailWithCheck(runId);
  if (!found) return null;
  const { detail } = found;
  // The stored check is { result, input }: the input (setup, rates, t₀, settings, track) reproduces the result.
  const stored = found.check
    ? (storedCheckResult(found.check) as { result?: { settings?: unknown; calibrationsApplied?: unknown }; input?: { settings?: unknown } } | null)
    : null;
  const check = found.check ? { ...serializeTheoryCheck(found.check), result: stored } : null;
  return {
    format: "tankside-run-export",
    formatVersion: 1,
    exportedAt: new Date().toISOString(),
    codeVersion,
    run: {
      id: detail.id,
      label: detail.label,
      state: detail.state,
      verdict: detail.verdict,
      checkStatus: detail.checkStatus,
      checkOutOfDate: detail.checkOutOfDate,
      purpose: detail.purpose,
      notes: detail.notes,
      createdAt: detail.createdAt,
      technician: detail.technician,
      supersedes: detail.supersedes,
      supersededBy: detail.supersededBy,
      signOff: detail.signOff,
    },
    conditions: detail.conditions,
    equipment: detail.equipment,
    frames: detail.frames,
    viewSetup: detail.viewSetup,
    calibrationIdsInForce: detail.calibrationsInForce.ids,
    calibrationsInForce: detail.calibrationsInForce.records,
    // What the latest check did with each of them, in words (null for a check made before this was recorded).
    calibrationsApplied: stored?.result?.calibrationsApplied ?? null,
    tracks: detail.tracks,
    trackingJob: detail.latestTrackingJob,
    settings: stored ? { used: stored.result?.settings ?? null, requested: stored.input?.settings ?? null } : null,
    theoryCheckInput: stored?.input ?? null,
    theoryCheck: check,
    tracksCsv: `/api/v1/runs/${detail.id}/tracks.csv`,
  };
}

import { Op } from "sequelize";
import { Frame, Run, TheoryCheck, Track, TrackingJob, ViewSetup } from "../db";
import { onBoot } from "../boot";
import { enqueueTracking } from "../jobs/tracking-queue";
import { checkRun } from "./theory";
import { trackingFingerprint } from "./provenance";
import { latestCheck } from "./current-check";

/**
 * Re-runs what a change to a run's inputs needs, in the background: the fit alone for conditions,
 * calibrations or lab settings; tracking (which ends in a check) for frames or the view setup.
 * The old check stops counting at once, because currentCheck compares fingerprints; the verdict
 * column of the runs table is cleared here at once too, since lists read it without re-hashing.
 */
export type Redo = "fit" | "track";

let chain: Promise<void> = Promise.resolve();
let held: Promise<void> | null = null;
let release: (() => void) | null = null;
const pending = new Map<number, number>();

async function redo(runId: number, userId: number | null, what: Redo) {
  const run = await Run.findByPk(runId);
  if (!run || run.state === "signed_off") return;
  if (what === "track") {
    // No frames or setup yet: nothing to track. A job already running re-tracks when it ends (see the queue).
    if (userId === null) return;
    await enqueueTracking(run, userId).catch(() => undefined);
    return;
  }
  await checkRun(runId, userId);
}

export function scheduleRecheck(runId: number, userId: number | null, what: Redo) {
  pending.set(runId, (pending.get(runId) ?? 0) + 1);
  chain = chain
    .then(() => held ?? undefined)
    .then(() => redo(runId, userId, what))
    .catch((err) => console.error(`[runs] re-check of run ${runId} failed:`, err))
    .finally(() => {
      const left = (pending.get(runId) ?? 1) - 1;
      if (left > 0) pending.set(runId, left);
      else pending.delete(runId);
    });
}

/** A re-check of this run is scheduled and has not finished yet. */
export function recheckPending(runId: number) {
  return pending.has(runId);
}

/**
 * An input of an unsigned run changed outside the run form (view setup, frames, equipment): the
 * verdict in the runs table goes at once and the needed part is redone. Runs without a check have
 * nothing to re-check: their technician tracks them when ready.
 */
export async function inputsChanged(runId: number, userId: number | null, what: Redo) {
  const run = await Run.findByPk(runId, { attributes: ["id", "state"] });
  if (!run || run.state === "signed_off") return;
  if (!(await TheoryCheck.count({ where: { runId } }))) return;
  await Run.update({ verdict: null }, { where: { id: runId } });
  scheduleRecheck(runId, userId, what);
}

/**
 * A lab-wide input of the fit changed (the verdict tolerance, a table's flatness): every unsigned
 * run with a check loses its verdict at once and is fitted again. Signed-off runs keep theirs.
 */
export async function refitUnsignedRuns(userId: number | null, where: { tableId?: number } = {}) {
  const checked = await TheoryCheck.findAll({ attributes: ["runId"], group: ["runId"] });
  const ids = checked.map((c) => c.runId);
  if (!ids.length) return 0;
  const runs = await Run.findAll({ where: { id: { [Op.in]: ids }, state: { [Op.ne]: "signed_off" }, ...where }, attributes: ["id"] });
  if (!runs.length) return 0;
  await Run.update({ verdict: null }, { where: { id: { [Op.in]: runs.map((r) => r.id) } } });
  for (const r of runs) scheduleRecheck(r.id, userId, "fit");
  return runs.length;
}

/**
 * Checks and tracking jobs made before fingerprints were kept vouch for nothing. At start, a
 * finished job that made the run's tracks and started after the run's view setup and frames last
 * changed is taken as made from them (its fingerprint is recorded now); then every unsigned run
 * whose latest check has no fingerprint is fitted again. Signed-off runs keep their signed check.
 */
export async function recheckUnfingerprinted() {
  const jobIds = (await Track.findAll({ attributes: ["jobId"], group: ["jobId"] })).map((t) => t.jobId);
  const jobs = jobIds.length ? await TrackingJob.findAll({ where: { id: { [Op.in]: jobIds }, state: "done", inputFingerprint: { [Op.is]: null } } }) : [];
  for (const job of jobs) {
    const run = await Run.findByPk(job.runId);
    const started = job.startedAt?.getTime();
    if (!run || started === undefined) continue;
    const [setup, lastFrame] = await Promise.all([
      ViewSetup.findOne({ where: { runId: run.id }, attributes: ["updatedAt"] }),
      Frame.findOne({ where: { runId: run.id }, attributes: ["createdAt"], order: [["createdAt", "DESC"]] }),
    ]);
    if (setup && setup.updatedAt.getTime() <= started && (!lastFrame || lastFrame.createdAt.getTime() <= started)) {
      await job.update({ inputFingerprint: await trackingFingerprint(run) });
    }
  }
  const legacy = await TheoryCheck.findAll({ where: { inputFingerprint: { [Op.is]: null } }, attributes: ["runId"], group: ["runId"] });
  let count = 0;
  for (const { runId } of legacy) {
    const [run, latest] = await Promise.all([
      Run.findByPk(runId, { attributes: ["id", "state"] }),
      latestCheck(runId, { attributes: ["id", "inputFingerprint"] }),
    ]);
    if (!run || run.state === "signed_off" || !latest || latest.inputFingerprint !== null) continue;
    await Run.update({ verdict: null }, { where: { id: runId } });
    scheduleRecheck(runId, null, "fit");
    count++;
  }
  return count;
}

/**
 * Checks made when only the longest track was fitted (their stored result has no per-track
 * `checks`) were fingerprinted over that one track, so every unsigned one reads as out of date
 * once every track is an input. At start each unsigned run whose latest check is such a check is
 * fitted again over all its tracks; signed-off runs keep their signed check, which still reads
 * (its one track is its only per-track check).
 */
export async function recheckSingleTrackChecks() {
  const checked = await TheoryCheck.findAll({ attributes: ["runId"], group: ["runId"] });
  const ids = checked.map((c) => c.runId);
  if (!ids.length) return 0;
  const runs = await Run.findAll({ where: { id: { [Op.in]: ids }, state: { [Op.ne]: "signed_off" } }, attributes: ["id"] });
  let count = 0;
  for (const { id } of runs) {
    const latest = await latestCheck(id, { attributes: ["id", "result", "inputFingerprint"] });
    // Checks with no fingerprint at all are recheckUnfingerprinted's.
    if (!latest || latest.inputFingerprint === null) continue;
    if ((JSON.parse(latest.result) as { checks?: unknown }).checks) continue;
    await Run.update({ verdict: null }, { where: { id } });
    scheduleRecheck(id, null, "fit");
    count++;
  }
  return count;
}

onBoot({
  name: "legacy-rechecks",
  start: async () => {
    const count = await recheckUnfingerprinted();
    if (count) console.log(`[runs] re-checking ${count} run(s) whose check predates input fingerprints`);
    const single = await recheckSingleTrackChecks();
    if (single) console.log(`[runs] re-checking ${single} run(s) whose check fitted one track only`);
  },
});

/** Resolves when every scheduled re-check has run (tests and the seeding wait on it). */
export async function whenRechecksIdle() {
  let seen: Promise<void>;
  do {
    seen = chain;
    await seen;
  } while (seen !== chain);
}

/** Holds scheduled re-checks until released, so a test can look at a run while its check is out of date. */
export function holdRechecks() {
  if (!held) held = new Promise<void>((r) => (release = r));
  return () => {
    release?.();
    held = null;
    release = null;
  };
}

import type { Transaction } from "sequelize";
import { Run, TheoryCheck, type TrackingJob } from "../db";
import { changedInputs, presentFingerprint, recordedInputs } from "./provenance";

/**
 * The one answer to "which is this run's check, and is it current?". Every reader of a run's check
 * (run page, report, export, API, sign-off) asks currentCheck; whoever needs the newest check
 * made, current or not (the next check's history entry, the start-up re-check of old checks),
 * asks latestCheck. A check is current only while the run's present inputs hash to the
 * fingerprint it stored (./provenance).
 */

export type CheckStatus = "current" | "out_of_date" | "missing";

export interface CurrentCheck {
  status: CheckStatus;
  /** The check to show and act on: set only when status is "current". */
  check: TheoryCheck | null;
  /** The newest check made, current or not. */
  latest: TheoryCheck | null;
  /** When out of date: which inputs changed since the latest check, in words. */
  changed: string[];
}

/** The newest check made for the run (highest id: ids rise with every check), current or not. */
export async function latestCheck(
  runId: number,
  options: { transaction?: Transaction; attributes?: Extract<keyof TheoryCheck, string>[] } = {},
): Promise<TheoryCheck | null> {
  return TheoryCheck.findOne({ where: { runId }, order: [["id", "DESC"]], ...options });
}

/**
 * The run's current theory check: the latest one, and only when it was computed from the run's
 * present inputs. A signed-off run keeps the check it was signed with: its inputs cannot change
 * any more, and a later lab setting does not reopen a signed verdict.
 */
export async function currentCheck(runOrId: Run | number, transaction?: Transaction): Promise<CurrentCheck> {
  const run = typeof runOrId === "number" ? await Run.findByPk(runOrId, { transaction }) : runOrId;
  if (!run) return { status: "missing", check: null, latest: null, changed: [] };
  const latest = await latestCheck(run.id, { transaction });
  if (!latest) return { status: "missing", check: null, latest: null, changed: [] };
  if (run.state === "signed_off") return { status: "current", check: latest, latest, changed: [] };
  const { fingerprint, inputs } = await presentFingerprint(run, undefined, transaction);
  if (fingerprint && latest.inputFingerprint === fingerprint) return { status: "current", check: latest, latest, changed: [] };
  const changed = changedInputs(recordedInputs(latest), inputs);
  return { status: "out_of_date", check: null, latest, changed: changed.length ? changed : ["tracks not made from the present frames and view setup"] };
}

/** How long after a tracking job ends its theory check is still awaited (it usually takes a second or two). */
const CHECK_AWAITED_MS = 120_000;

/**
 * True while the theory check that follows a finished tracking job has not been made yet: the job
 * is done, the run is tracked (not signed off), no check is newer than the job's end, and the job
 * ended less than two minutes ago (a check that failed is not awaited for ever). The run page keeps
 * polling while this holds, so the verdict appears without a reload.
 *
 * `shown` is the newest check as the caller read it for the page it builds. The page's reads are
 * separate statements: a check made between them (it follows the job within a few hundredths of a
 * second) would otherwise be missing from the page while this, reading afresh, said it was no longer
 * awaited, and the page would stop asking with no verdict on it (seen on PostgreSQL). With `shown`,
 * a page without the check keeps polling, and the poll, reading afresh, ends it.
 */
export async function checkAwaited(run: Run, job: TrackingJob | null, now = new Date(), shown?: Pick<TheoryCheck, "createdAt"> | null): Promise<boolean> {
  if (!job || job.state !== "done" || !job.finishedAt) return false;
  // The run's state as the job left it: a page may have loaded the run just before the job's last
  // write (the same transaction that marks it tracked), and read the job just after (Decision 67).
  const state = (await Run.findByPk(run.id, { attributes: ["state"] }))?.state ?? run.state;
  // "checked": the check has been made, perhaps after the caller read the one it shows (see `shown`).
  if (state !== "tracked" && state !== "checked") return false;
  if (now.getTime() - job.finishedAt.getTime() > CHECK_AWAITED_MS) return false;
  const latest = shown !== undefined ? shown : await latestCheck(run.id, { attributes: ["id", "createdAt"] });
  return !latest || latest.createdAt.getTime() < job.finishedAt.getTime();
}

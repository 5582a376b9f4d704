import { createHash } from "node:crypto";
import { Op } from "sequelize";
import { StreamedDetection } from "../db";
import { codeVersion } from "../version";
import { backgroundSampleIndices } from "~/lib/tracking/background";
import { planDetection, planKey } from "~/lib/tracking/plan";
import type { Detection, FrameDetections, TrackingSetup } from "~/lib/tracking/types";

/**
 * Detections found as frames arrived, kept for the run's tracking job (Decision 61). A frame's
 * detections depend only on its content, the detection plan (view setup and frame size) and the
 * still background, which is the median of the frames `backgroundSampleIndices(N)` names in a
 * stack of N. The basis names all of that (and the code version), so a row is used only for the
 * very search the job would have made itself: a deleted, replaced or renumbered sampled frame, a
 * changed setup or another stack length gives another basis, and the job searches again.
 */
export function streamBasis(setup: TrackingSetup, size: { width: number; height: number }, sampledShas: readonly string[]): string {
  const plan = planKey(planDetection(setup, size.width, size.height));
  return createHash("sha256").update(codeVersion).update("\n").update(plan).update("\n").update(sampledShas.join(",")).digest("hex");
}

/** The basis of a whole stack (frames' sha256 in stack order), or null when it has too few frames for a background. */
export function stackBasis(setup: TrackingSetup, size: { width: number; height: number }, shas: readonly string[]): string | null {
  if (shas.length < 3) return null;
  const sampled = backgroundSampleIndices(shas.length).map((i) => shas[i]!);
  return streamBasis(setup, size, sampled);
}

export async function saveStreamed(runId: number, basis: string, frames: { sha256: string; detections: Detection[] }[]) {
  if (!frames.length) return;
  await StreamedDetection.bulkCreate(
    frames.map((f) => ({ runId, basis, sha256: f.sha256, detections: JSON.stringify(f.detections) })),
    { ignoreDuplicates: true },
  );
}

/**
 * The streamed detections of a stack's frames on `basis`, as frames of the stack (times from the
 * stack). `known` holds finds already in memory on the same basis (this process's stream); only
 * the frames it lacks are read from the table.
 */
export async function streamedFrames(
  runId: number,
  basis: string,
  shas: readonly string[],
  times: readonly number[],
  known?: ReadonlyMap<string, Detection[]>,
): Promise<FrameDetections[]> {
  const bySha = new Map(known ?? []);
  const missing = [...new Set(shas)].filter((sha) => !bySha.has(sha));
  if (missing.length) {
    const rows = await StreamedDetection.findAll({ where: { runId, basis, sha256: { [Op.in]: missing } }, attributes: ["sha256", "detections"] });
    for (const r of rows) bySha.set(r.sha256, JSON.parse(r.detections) as Detection[]);
  }
  const frames: FrameDetections[] = [];
  shas.forEach((sha, frameIndex) => {
    const detections = bySha.get(sha);
    if (detections) frames.push({ frameIndex, t: times[frameIndex]!, detections });
  });
  return frames;
}

/** Shas of a run already searched on `basis`. */
export async function streamedShas(runId: number, basis: string): Promise<Set<string>> {
  const rows = await StreamedDetection.findAll({ where: { runId, basis }, attributes: ["sha256"] });
  return new Set(rows.map((r) => r.sha256));
}

/**
 * After a job has stored its tracks: the run keeps only the rows of the finished stack's frames on
 * its basis (a re-track of the same stack uses them). Rows of another basis or of frames no longer in
 * the stack are of no use to it, and were otherwise kept until the run was deleted. They are a
 * store of work done, never of results: a row removed here at worst makes a later job search that
 * frame itself.
 */
export async function pruneStreamed(runId: number, basis: string | null, shas: readonly string[]): Promise<number> {
  const where = basis ? { runId, [Op.or]: [{ basis: { [Op.ne]: basis } }, { sha256: { [Op.notIn]: [...new Set(shas)] } }] } : { runId };
  return StreamedDetection.destroy({ where });
}

/**
 * The one place a run becomes JSON: every API route that answers with a run, and the pages that
 * show one, build it here. Each function's return type is the zod response schema's (z.infer), so
 * a field added here without the schema, or left out, fails the typecheck; the schema is the
 * OpenAPI document's, so the document and the answers cannot drift apart.
 */
import { correctionOfSetup, parseKnownPoints, parseRimPoints } from "~/lib/projective/stored-marks";
import type { Run, TheoryCheck, Track, ViewSetup } from "../db";
import type { RunLinkView, RunListItemView, RunView, TheoryCheckView } from "../openapi/responses/runs";
import type { z } from "zod";
import type { trackSummarySchema, viewSetupSchema } from "../openapi/responses/runs";
import { runLabel } from "~/lib/runs";
import type { TheoryCheckResult } from "~/lib/analysis/check";
import type { StoredTrackCheck, TrackCombination } from "~/lib/analysis/check-tracks";

const iso = (d: Date | null) => d?.toISOString() ?? null;

/** The run's own record as POST/PATCH /api/v1/runs and sign-off answer it: stored columns, SI units as named. */
export function serializeRun(run: Run): RunView {
  return {
    id: run.id,
    label: runLabel(run.id),
    state: run.state,
    verdict: run.verdict,
    tableId: run.tableId,
    tankId: run.tankId,
    cameraId: run.cameraId,
    setRateRpm: run.setRateRpm,
    direction: run.direction,
    waterDepthM: run.waterDepthM,
    waterTemperatureC: run.waterTemperatureC,
    rateReachedAt: iso(run.rateReachedAt),
    cameraMode: run.cameraMode,
    frameRateFps: run.frameRateFps,
    tracer: run.tracer,
    purpose: run.purpose,
    notes: run.notes,
    technicianId: run.technicianId,
    supersedesId: run.supersedesId,
    signedOffById: run.signedOffById,
    signedOffAt: iso(run.signedOffAt),
    frameCount: run.frameCount,
    createdAt: run.createdAt.toISOString(),
    updatedAt: run.updatedAt.toISOString(),
  };
}

type Named = { id: number; name: string };

/** One row of the runs table and GET /api/v1/runs; `name` turns equipment and person ids into names. */
export function serializeRunListItem(r: Run, name: { equipment: (id: number) => Named; person: (id: number) => Named }): RunListItemView {
  return {
    id: r.id,
    label: runLabel(r.id),
    createdAt: r.createdAt.toISOString(),
    state: r.state,
    verdict: r.verdict,
    table: name.equipment(r.tableId),
    tank: name.equipment(r.tankId),
    camera: name.equipment(r.cameraId),
    technician: name.person(r.technicianId),
    setRateRpm: r.setRateRpm,
    direction: r.direction,
    waterDepthM: r.waterDepthM,
    waterTemperatureC: r.waterTemperatureC,
    cameraMode: r.cameraMode,
    tracer: r.tracer,
    frameCount: r.frameCount,
    purpose: r.purpose,
    signedOffAt: iso(r.signedOffAt),
    supersedesId: r.supersedesId,
  };
}

/** A link to another run: the one this corrects, or one that corrects it. */
export const serializeRunLink = (r: Pick<Run, "id" | "state" | "createdAt">): RunLinkView => ({
  id: r.id,
  label: runLabel(r.id),
  state: r.state,
  createdAt: r.createdAt.toISOString(),
});

function parseJson(text: string | null): unknown {
  if (!text) return null;
  try {
    return JSON.parse(text) as unknown;
  } catch {
    return null;
  }
}

function tiltSummary(s: ViewSetup) {
  const summary = correctionOfSetup(s).correction?.summary;
  return summary
    ? { method: summary.method, tiltDeg: summary.tiltDeg, towardDeg: summary.towardDeg, sideKnown: summary.sideKnown, residualPx: summary.residualPx }
    : null;
}

export function serializeViewSetup(s: ViewSetup | null): z.infer<typeof viewSetupSchema> | null {
  if (!s) return null;
  return {
    id: s.id,
    cameraId: s.cameraId,
    centrePx: { x: s.centreXPx, y: s.centreYPx },
    tankEdgePx: s.tankEdgeXPx !== null && s.tankEdgeYPx !== null && s.tankEdgeRPx !== null ? { x: s.tankEdgeXPx, y: s.tankEdgeYPx, r: s.tankEdgeRPx } : null,
    scalePxPerM: s.scalePxPerM,
    scalePoints: parseJson(s.scalePoints),
    mirrored: s.mirrored,
    rimPoints: parseRimPoints(s.rimPoints),
    knownPoints: parseKnownPoints(s.knownPoints),
    tiltCorrection: tiltSummary(s),
    updatedAt: s.updatedAt.toISOString(),
  };
}

const num = (v: unknown): number | null => (typeof v === "number" && Number.isFinite(v) ? v : null);

type StoredJson = {
  result?: Partial<TheoryCheckResult>;
  checks?: Partial<StoredTrackCheck>[];
  combination?: TrackCombination | null;
  input?: { trackNumber?: number | null };
};

function serializeTrackCheck(t: Partial<StoredTrackCheck>, fallback: { verdict: TheoryCheck["verdict"]; fMeasuredPerS: number | null }) {
  return {
    trackNumber: num(t.trackNumber),
    verdict: t.verdict ?? fallback.verdict,
    fMeasuredPerS: num(t.fMeasured) ?? (t.fMeasured === undefined ? fallback.fMeasuredPerS : null),
    fStdErrorPerS: num(t.fStdError),
    dragPerS: num(t.drag),
    dragStdErrorPerS: num(t.dragStdError),
    nPoints: num(t.nPoints) ?? 0,
    combined: t.combined ?? t.fMeasured !== null,
    pull: num(t.pull),
    flagged: t.flagged === true,
    reason: typeof t.reason === "string" ? t.reason : "",
  };
}

/** A check as the API answers it: the combined verdict, each track's own check and how they were combined. */
export function serializeTheoryCheck(c: TheoryCheck): TheoryCheckView {
  const stored = (parseJson(c.result) ?? {}) as StoredJson;
  const fallback = { verdict: c.verdict, fMeasuredPerS: c.fMeasuredPerS };
  // A check stored before every track was checked holds one track's result: that is its only per-track check.
  const checks = stored.checks ?? [{ ...stored.result, trackNumber: stored.input?.trackNumber ?? null }];
  const k = stored.combination;
  return {
    id: c.id,
    trackId: c.trackId,
    trackNumber: k?.representativeTrack ?? stored.input?.trackNumber ?? null,
    verdict: c.verdict,
    fMeasuredPerS: c.fMeasuredPerS,
    fPredictedPerS: c.fPredictedPerS,
    checks: checks.map((t) => serializeTrackCheck(t, fallback)),
    combination: k
      ? {
          n: k.n,
          of: k.of,
          representativeTrack: k.representativeTrack,
          fMeanPerS: k.fMean,
          stdErrorPerS: k.stdError,
          chi2: k.chi2,
          dof: k.dof,
          birgeRatio: k.birgeRatio,
          pValue: k.pValue,
          scale: k.scale,
          consistent: k.consistent,
          words: k.words,
        }
      : null,
    codeVersion: c.codeVersion,
    createdAt: c.createdAt.toISOString(),
  };
}

/** The stored check as export.json carries it: { result, input }, or null if it cannot be read. */
export const storedCheckResult = (c: TheoryCheck) => parseJson(c.result);

export const serializeTrackSummary = (t: Track): z.infer<typeof trackSummarySchema> => ({
  id: t.id,
  number: t.number,
  jobId: t.jobId,
  pointCount: t.pointCount,
  detectedShare: t.detectedShare,
  jitterPx: t.jitterPx,
});

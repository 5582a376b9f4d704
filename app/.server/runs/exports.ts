import { correctionOfSetup } from "~/lib/projective/stored-marks";
import { Run, Track, ViewSetup } from "../db";
import { currentCheck } from "./current-check";
import { RunError } from "./service";
import { csvDocument, type CsvCell } from "../csv";
import { parseTrackPoints } from "./theory";
import { runOmega } from "~/lib/analysis/run-omega";
import { trackToRotatingFrame, type ViewGeometry } from "~/lib/analysis/frames";
import { runLabel } from "~/lib/runs";
import { correctFrameTimes } from "~/lib/calibrations-applied";

function csvNumber(v: number): CsvCell {
  // Enough digits for sub-pixel positions and millisecond times; no locale, no thousands separators.
  return Number.isFinite(v) ? String(Number(v.toPrecision(10))) : null;
}

/**
 * The run's tracks as CSV, one row a point: track (its number in the run, as the run page, report
 * and API show it), t_s (the camera's time, as tracked), x_px,
 * y_px, and x_m, y_m in the rotating frame when the view setup has a scale (else the scale
 * calibration's, when the current check used it). A lab-fixed camera's positions are de-rotated by
 * −Ω(t − t₀), Ω the rate the current theory check used (else the set rate: an out-of-date check's
 * rate belongs to other conditions), t₀ each track's first time, t the camera's time corrected by
 * the timing check that check applied.
 */
export async function tracksCsv(runId: number): Promise<{ filename: string; csv: string; withMetres: boolean }> {
  const run = await Run.findByPk(runId);
  if (!run) throw new RunError("No such run.", 404, undefined, "not_found");
  const tracks = await Track.findAll({
    where: { runId },
    order: [
      ["number", "ASC"],
      ["id", "ASC"],
    ],
  });
  if (!tracks.length) {
    throw new RunError(`${runLabel(run.id)} has no tracks yet: upload its frames, set up the view and run tracking first.`, 409, undefined, "no_tracks");
  }
  const setup = await ViewSetup.findOne({ where: { runId } });
  const { check } = await currentCheck(run);
  let omega = runOmega(run);
  let timeFactor = 1;
  let checkPxPerM: number | null = null;
  if (check) {
    try {
      // Stored as { result, input } by the theory check (see StoredCheck in ./theory).
      const stored = JSON.parse(check.result) as { result?: { omega?: unknown; frameTimeFactor?: unknown }; input?: { setup?: { pxPerM?: unknown } } };
      const used = stored.result?.omega;
      if (typeof used === "number" && Number.isFinite(used)) omega = used;
      const factor = stored.result?.frameTimeFactor;
      if (typeof factor === "number" && factor > 0) timeFactor = factor;
      const scale = stored.input?.setup?.pxPerM;
      if (typeof scale === "number" && scale > 0) checkPxPerM = scale;
    } catch {
      // An unreadable stored result leaves the set rate in use.
    }
  }
  const pxPerM = setup?.scalePxPerM || checkPxPerM;
  const view: ViewGeometry | null =
    setup && pxPerM
      ? {
          centre: { x: setup.centreXPx, y: setup.centreYPx },
          pxPerM,
          mirrored: setup.mirrored,
          correction: correctionOfSetup(setup).correction?.homography ?? null,
        }
      : null;

  const columns = view ? ["track", "t_s", "x_px", "y_px", "x_m", "y_m"] : ["track", "t_s", "x_px", "y_px"];
  const rows: CsvCell[][] = [];
  for (const track of tracks) {
    const points = parseTrackPoints(track);
    const timed = timeFactor === 1 ? points : correctFrameTimes(points, timeFactor);
    const rotating = view && timed.length ? trackToRotatingFrame(timed, view, run.cameraMode, omega, timed[0]!.t) : null;
    points.forEach((p, i) => {
      const cells: CsvCell[] = [track.number, csvNumber(p.t), csvNumber(p.x), csvNumber(p.y)];
      if (rotating) {
        const r = rotating[i];
        cells.push(r ? csvNumber(r.x) : null, r ? csvNumber(r.y) : null);
      }
      rows.push(cells);
    });
  }
  return { filename: `${runLabel(run.id)}-tracks.csv`, csv: csvDocument(columns, rows), withMetres: Boolean(view) };
}

/**
 * The view setup's tilt marks previewed as they stand: the correction they give, the known points'
 * fit for the overlay, or why there is none yet, in the words the editor shows (what saving checks).
 */
import { formatFixed } from "./number-format";
import { GeometryError } from "./projective/geometry-error";
import { completeKnownPoints, knownPointsFit, knownPointsProblem, minKnownPoints, type KnownPointsFit } from "./projective/known-points";
import { tiltInWords, viewCorrection, type ViewCorrection } from "./projective/view-correction";
import type { SetupValues } from "./setup-marks";

export interface LiveTilt {
  correction: ViewCorrection | null;
  /** the known points' map against the clicks, and the table's grid through it (known points only) */
  fit: KnownPointsFit | null;
  message: string | null;
}

/** The correction the marks give as they stand, or why they give none yet (a live preview of what saving checks). */
export function liveTilt(v: SetupValues): LiveTilt {
  const rim = v.rimPoints;
  const known = v.knownPoints;
  const none = (message: string | null): LiveTilt => ({ correction: null, fit: null, message });
  if (!rim.length && !known.length) return none(null);
  if (!v.centre) return none("Mark the rotation centre too: the correction is built about it.");
  if (rim.length && rim.length < 5) return none(`${rim.length} of at least 5 rim points placed.`);
  if (!rim.length && known.length < minKnownPoints) return none(`${known.length} of at least ${minKnownPoints} known points placed.`);
  try {
    if (rim.length) return { correction: viewCorrection({ kind: "rim", points: rim }, v.centre, v.mirrored), fit: null, message: null };
    const problem = knownPointsProblem(known);
    const points = completeKnownPoints(known);
    if (problem || !points) return none(problem);
    return { correction: viewCorrection({ kind: "known", points }, v.centre, v.mirrored), fit: knownPointsFit(points, v.mirrored), message: null };
  } catch (error) {
    if (error instanceof GeometryError) return none(error.message);
    throw error;
  }
}

/** The readout under the tilt tools: the lean and how well the marks fit, or what is missing. */
export function tiltReadout({ correction, message }: LiveTilt, knownCount: number): string {
  if (!correction) return message ?? "No tilt correction: positions are used as the camera saw them.";
  const lean = upperFirst(tiltInWords(correction.summary, (d) => formatFixed(d, 1)));
  if (correction.summary.ellipse) return `${lean}; the points sit ${formatFixed(correction.summary.residualPx, 2)} px from their ellipse on average.`;
  if (knownCount === minKnownPoints) return `${lean}. Four points fix the map exactly, so it cannot show a misplaced one: add a fifth to check them.`;
  return `${lean}; the points sit ${formatFixed(correction.summary.residualPx, 2)} px from where the fitted map puts them on average.`;
}

const upperFirst = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

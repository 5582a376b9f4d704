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

/**
 * Rim ellipses whose axes differ by less than this (frame px) do not tell a lean from none: a
 * camera straight overhead, marked by clicks good to about a pixel, reads a few degrees. A circle
 * of radius r seen tilted θ has axes r and r·cos θ, so r = 200 px and θ = 5° differ by 0.76 px.
 */
const closeAxesPx = 1;

/** The readout under the tilt tools: the lean and how well the marks fit, or what is missing. */
export function tiltReadout({ correction, message }: LiveTilt, knownCount: number): string {
  if (!correction) return message ?? "No tilt correction: positions are used as the camera saw them.";
  const lean = upperFirst(tiltInWords(correction.summary, (d) => formatFixed(d, 1)));
  const { ellipse } = correction.summary;
  if (ellipse) {
    const fit = `${lean}; the points sit ${formatFixed(correction.summary.residualPx, 2)} px from their ellipse on average.`;
    if (ellipse.a - ellipse.b >= closeAxesPx) return fit;
    return `${fit} Its axes differ by only ${formatFixed(ellipse.a - ellipse.b, 1)} px, finer than a click places a point at 1× zoom, so a lean this small cannot be told from none: zoom in and place the points again, closer to the water line.`;
  }
  if (knownCount === minKnownPoints) return `${lean}. Four points fix the map exactly, so it cannot show a misplaced one: add a fifth to check them.`;
  return `${lean}; the points sit ${formatFixed(correction.summary.residualPx, 2)} px from where the fitted map puts them on average.`;
}

const upperFirst = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

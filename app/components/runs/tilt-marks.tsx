import { formatFixed } from "~/lib/number-format";
import type { Point } from "~/lib/geometry";
import { GeometryError } from "~/lib/projective/geometry-error";
import { tiltInWords, viewCorrection, type ViewCorrection } from "~/lib/projective/view-correction";
import type { SetupValues } from "~/lib/setup-marks";
import { Button } from "~/components/ui/button";

/** The correction the marks give as they stand, or why they give none yet (a live preview of what saving checks). */
export function liveTilt(v: SetupValues): { correction: ViewCorrection | null; message: string | null } {
  const rim = v.rimPoints;
  const known = v.knownPoints;
  if (!rim.length && !known.length) return { correction: null, message: null };
  if (!v.centre) return { correction: null, message: "Mark the rotation centre too: the correction is built about it." };
  if (rim.length && rim.length < 5) return { correction: null, message: `${rim.length} of at least 5 rim points placed.` };
  try {
    const correction = viewCorrection(rim.length ? { kind: "rim", points: rim } : { kind: "known", points: known }, v.centre, v.mirrored);
    return { correction, message: null };
  } catch (error) {
    if (error instanceof GeometryError) return { correction: null, message: error.message };
    throw error;
  }
}

/** The rim points and, once they make one, their ellipse, drawn in the frame's pixels. */
export function TiltOverlay({ points, correction, mark }: { points: readonly Point[]; correction: ViewCorrection | null; mark: number }) {
  const e = correction?.summary.ellipse;
  return (
    <g data-testid="tilt-overlay">
      {e ? (
        <ellipse
          cx={e.cx}
          cy={e.cy}
          rx={e.a}
          ry={e.b}
          transform={`rotate(${e.angleDeg} ${e.cx} ${e.cy})`}
          fill="none"
          stroke="#ffa94d"
          strokeWidth={mark / 2}
          data-testid="tilt-ellipse"
        />
      ) : null}
      {points.map((p, i) => (
        <g key={i}>
          <circle cx={p.x} cy={p.y} r={mark} fill="#ffa94d" stroke="#000" strokeWidth={mark / 4} />
          <text x={p.x + mark * 1.5} y={p.y - mark * 1.5} fontSize={mark * 3} fill="#ffa94d" stroke="#000" strokeWidth={mark / 6} paintOrder="stroke">
            {i + 1}
          </text>
        </g>
      ))}
    </g>
  );
}

/** The side panel: what the marks say about the camera's lean, the marks as the form sends them, and a way to clear them. */
export function TiltPanel({ v, onClear, error }: { v: SetupValues; onClear: () => void; error: string[] | undefined }) {
  const { correction, message } = liveTilt(v);
  return (
    <fieldset className="flex flex-col gap-2" aria-describedby="tilt-readout">
      <legend className="mb-1 font-bold">Camera not quite overhead (optional)</legend>
      <p className="text-sm text-muted">
        Click five or more points where the water meets the tank wall, spread all round. Their ellipse and the rotation centre give a correction the theory
        check applies to every position.
      </p>
      <input type="hidden" name="rimPoints" value={v.rimPoints.length ? JSON.stringify(v.rimPoints) : ""} />
      <input type="hidden" name="knownPoints" value={v.knownPoints.length ? JSON.stringify(v.knownPoints) : ""} />
      <p id="tilt-readout" aria-live="polite" className={message ? "text-muted" : "font-bold"} data-testid="tilt-readout">
        {correction
          ? `${upperFirst(tiltInWords(correction.summary, (d) => formatFixed(d, 1)))}; the points sit ${formatFixed(correction.summary.residualPx, 2)} px from ${
              correction.summary.ellipse ? "their ellipse" : "the fitted map"
            } on average.`
          : (message ?? "No tilt correction: positions are used as the camera saw them.")}
      </p>
      {error?.length ? (
        <p className="text-sm font-bold text-disagrees-ink" role="alert" id="rimPoints-error">
          {error.join(" ")}
        </p>
      ) : null}
      {v.knownPoints.length ? (
        <p className="text-sm text-muted">{v.knownPoints.length} known points are kept as saved; clear them to mark rim points instead.</p>
      ) : null}
      {v.rimPoints.length || v.knownPoints.length ? (
        <Button type="button" tone="quiet" onClick={onClear}>
          Clear the tilt points
        </Button>
      ) : null}
    </fieldset>
  );
}

const upperFirst = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

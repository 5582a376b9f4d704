import type { Point } from "~/lib/geometry";
import type { ViewCorrection } from "~/lib/projective/view-correction";
import { tiltReadout, type LiveTilt } from "~/lib/tilt-preview";
import type { SetupValues } from "~/lib/setup-marks";
import { Button } from "~/components/ui/button";
import { MarksProblem } from "./marks-problem";

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

/**
 * The side panel of the rim points: what the marks say about the camera's lean (rim or known
 * points), the marks as the form sends them, and a way to clear the rim points.
 */
export function TiltPanel({ v, tilt, onClear, error }: { v: SetupValues; tilt: LiveTilt; onClear: () => void; error: string[] | undefined }) {
  return (
    <fieldset className="flex flex-col gap-2" aria-describedby="tilt-readout">
      <legend className="mb-1 font-bold">Camera not quite overhead (optional)</legend>
      <p className="text-sm text-muted">
        Click five or more points where the water meets the tank wall, spread all round, or use known points below. The marks and the rotation centre give a
        correction the theory check applies to every position.
      </p>
      <input type="hidden" name="rimPoints" value={v.rimPoints.length ? JSON.stringify(v.rimPoints) : ""} />
      <input type="hidden" name="knownPoints" value={v.knownPoints.length ? JSON.stringify(v.knownPoints) : ""} />
      <p id="tilt-readout" aria-live="polite" className={tilt.correction ? "font-bold" : "text-muted"} data-testid="tilt-readout">
        {tiltReadout(tilt, v.knownPoints.length)}
      </p>
      <MarksProblem error={error} id="rimPoints-error" testId="tilt-error" />
      {v.rimPoints.length ? (
        <Button type="button" tone="quiet" onClick={onClear}>
          Clear the rim points
        </Button>
      ) : null}
    </fieldset>
  );
}

import { TextField } from "~/components/ui/field";
import { Button } from "~/components/ui/button";
import { formatFixed } from "~/lib/number-format";
import { minKnownPoints, type KnownPointEntry, type KnownPointsFit } from "~/lib/projective/known-points";
import type { SetupValues } from "~/lib/setup-marks";
import type { useNumberFields } from "./use-number-fields";
import { MarksProblem } from "./marks-problem";

const knownColour = "#d2b6ff";
const gridColour = "#7fd4ff";

/**
 * The known points in the frame's pixels: each click as a numbered diamond; once the points give a
 * map, the table's grid and its outer circle drawn through it (what the correction takes for the
 * table), and a line from each click to where the map puts its typed position.
 */
export function KnownPointsOverlay({ entries, fit, mark }: { entries: readonly KnownPointEntry[]; fit: KnownPointsFit | null; mark: number }) {
  return (
    <g data-testid="known-overlay">
      {fit ? (
        <g stroke={gridColour} strokeWidth={mark / 4} fill="none" opacity={0.85} data-testid="known-grid">
          {fit.grid.lines.map(([a, b], i) => (
            <line key={i} x1={a.x} y1={a.y} x2={b.x} y2={b.y} strokeDasharray={`${mark} ${mark / 2}`} />
          ))}
          <polygon points={fit.grid.circle.map((p) => `${p.x},${p.y}`).join(" ")} strokeWidth={mark / 2} />
        </g>
      ) : null}
      {fit?.points.map((p, i) => (
        <g key={`fit-${i}`} stroke={gridColour} strokeWidth={mark / 3} data-testid="known-fitted">
          <line x1={p.clicked.x} y1={p.clicked.y} x2={p.fitted.x} y2={p.fitted.y} />
          <line x1={p.fitted.x - mark * 1.5} y1={p.fitted.y} x2={p.fitted.x + mark * 1.5} y2={p.fitted.y} />
          <line x1={p.fitted.x} y1={p.fitted.y - mark * 1.5} x2={p.fitted.x} y2={p.fitted.y + mark * 1.5} />
        </g>
      ))}
      {entries.map((p, i) => (
        <g key={i}>
          <rect
            x={p.x - mark * 1.2}
            y={p.y - mark * 1.2}
            width={mark * 2.4}
            height={mark * 2.4}
            transform={`rotate(45 ${p.x} ${p.y})`}
            fill={knownColour}
            stroke="#1b0a36"
            strokeWidth={mark / 3}
          />
          <text
            x={p.x + mark * 1.8}
            y={p.y - mark * 1.8}
            fontSize={mark * 3.2}
            fontWeight="bold"
            fill={knownColour}
            stroke="#1b0a36"
            strokeWidth={mark / 3}
            paintOrder="stroke"
          >
            {i + 1}
          </text>
        </g>
      ))}
    </g>
  );
}

type NumberField = ReturnType<typeof useNumberFields>["numberField"];

/**
 * The known points as a list: where each was clicked, its table position typed in cm, how far the
 * fitted map puts it from the click (five or more), and a button to remove it.
 */
export function KnownPointsPanel({
  v,
  fit,
  numberField,
  onRemove,
  onClear,
  error,
}: {
  v: SetupValues;
  fit: KnownPointsFit | null;
  numberField: NumberField;
  onRemove: (index: number) => void;
  onClear: () => void;
  error: string[] | undefined;
}) {
  const set = (i: number, key: "tableXCm" | "tableYCm") => (n: number | null) => ({
    ...v,
    knownPoints: v.knownPoints.map((q, j) => (j === i ? { ...q, [key]: n } : q)),
  });
  return (
    <fieldset className="flex flex-col gap-3" data-testid="known-points">
      <legend className="mb-1 font-bold">Known points (cm from the rotation centre)</legend>
      <p className="text-sm text-muted">
        With the &ldquo;Tilt (4+ known points)&rdquo; tool, click {minKnownPoints} or more marks you measured on the table and type where each lies: x and y in
        cm from the rotation centre, along any two perpendicular directions with y a quarter turn anticlockwise from x seen from above. The correction holds for
        the height of the marks, so use marks at the height the tracer moves at: for a float the water&apos;s surface (tape at the water line on the wall);
        marks on the bottom suit dye near the bottom.
      </p>
      {v.knownPoints.length ? (
        <ol className="flex flex-col gap-3">
          {v.knownPoints.map((p, i) => {
            const off = fit?.points[i]?.offPx;
            return (
              <li key={i} className="rounded-lg border-2 border-line p-3" data-testid={`known-point-${i + 1}`}>
                <p className="mb-2 flex flex-wrap items-baseline justify-between gap-2">
                  <span className="font-bold">Point {i + 1}</span>
                  <span className="text-sm text-muted">
                    clicked at {formatFixed(p.x, 1)}, {formatFixed(p.y, 1)} px
                    {off !== undefined && v.knownPoints.length > minKnownPoints ? `; the fit puts it ${formatFixed(off, 2)} px away` : ""}
                  </span>
                </p>
                <div className="grid grid-cols-[1fr_1fr_auto] items-end gap-2">
                  <TextField
                    label={
                      <>
                        <span className="sr-only">Point {i + 1} </span>x, cm
                      </>
                    }
                    {...numberField(`known-${i + 1}-x`, p.tableXCm, set(i, "tableXCm"), undefined, { invalidAsBlank: true })}
                  />
                  <TextField
                    label={
                      <>
                        <span className="sr-only">Point {i + 1} </span>y, cm
                      </>
                    }
                    {...numberField(`known-${i + 1}-y`, p.tableYCm, set(i, "tableYCm"), undefined, { invalidAsBlank: true })}
                  />
                  <Button type="button" tone="quiet" aria-label={`Remove point ${i + 1}`} onClick={() => onRemove(i)}>
                    Remove
                  </Button>
                </div>
              </li>
            );
          })}
        </ol>
      ) : (
        <p className="text-sm text-muted">No known points placed.</p>
      )}
      <MarksProblem error={error} id="knownPoints-error" testId="known-error" />
      {v.knownPoints.length ? (
        <Button type="button" tone="quiet" onClick={onClear}>
          Clear the known points
        </Button>
      ) : null}
    </fieldset>
  );
}

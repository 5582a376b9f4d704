/**
 * A plot's key, drawn by Tankside rather than the chart library: each series' mark (a dot, a line or
 * a dashed line) in its own colour, its words in ink. The library coloured the words like their
 * series, and amber text on white has too little contrast to read (3.4:1); a fit drawn only as a
 * line also showed no mark at all.
 */
export interface LegendEntry {
  label: string;
  colour: string;
  mark: "dot" | "line" | "dashed";
}

function Mark({ colour, mark }: Omit<LegendEntry, "label">) {
  return (
    <svg width="28" height="12" viewBox="0 0 28 12" aria-hidden="true" className="shrink-0">
      {mark === "dot" ? (
        <circle cx="14" cy="6" r="4.5" fill={colour} />
      ) : (
        <line x1="1" y1="6" x2="27" y2="6" stroke={colour} strokeWidth="3" strokeDasharray={mark === "dashed" ? "6 4" : undefined} />
      )}
    </svg>
  );
}

export function PlotLegend({ entries }: { entries: LegendEntry[] }) {
  return (
    <ul className="mb-1 flex flex-wrap gap-x-4 gap-y-1 text-sm text-ink" data-testid="plot-legend">
      {entries.map((e) => (
        <li key={e.label} className="inline-flex items-center gap-1.5">
          <Mark colour={e.colour} mark={e.mark} />
          {e.label}
        </li>
      ))}
    </ul>
  );
}

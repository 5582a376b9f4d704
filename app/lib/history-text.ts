import { formatCentimetres, formatNumber } from "./number-format";
import { cameraModeLabels, directionLabels, tracerLabels } from "./runs";

/**
 * A history line (of a run or a calibration record) in words: what happened and what changed,
 * values with their units and labels rather than as stored (a depth in metres, a direction code, an
 * ISO instant). Single happenings (logged, signed off) say what they were once, not twice
 * ("logged | logged").
 */
export interface HistoryEntryText {
  what: string;
  /** A happening: its detail, if it has one. A change: the old and new values as people read them. */
  change: { event: true; detail: string | null } | { event: false; from: string | null; to: string | null };
}

type Entry = { field: string; fieldLabel: string; oldValue: string | null; newValue: string | null };

const number =
  (unit: string, digits = 6) =>
  (v: string) =>
    `${formatNumber(Number(v), digits)} ${unit}`;
const labelled = (labels: Record<string, string>) => (v: string) => labels[v] ?? v;

/** Fields stored as numbers or codes, shown with their units or labels; the label then drops its "(unit)". */
const runValues: Record<string, (v: string, dateTime: (iso: string) => string) => string> = {
  setRateRpm: number("rpm"),
  waterDepthM: (v) => formatCentimetres(Number(v), 6),
  waterTemperatureC: number("°C"),
  frameRateFps: number("frames/s"),
  rateReachedAt: (v, dateTime) => dateTime(v),
  direction: labelled(directionLabels),
  cameraMode: labelled(cameraModeLabels),
  tracer: labelled(tracerLabels),
};

const capital = (s: string) => s.charAt(0).toUpperCase() + s.slice(1);

export function historyEntryText(entry: Entry, events: readonly string[], dateTime: (iso: string) => string): HistoryEntryText {
  if (events.includes(entry.field)) {
    // The detail repeats nothing the label says: a run's creation line stores "logged" as its value.
    const detail = entry.newValue === null || entry.newValue === entry.fieldLabel ? null : entry.newValue;
    return { what: capital(entry.fieldLabel), change: { event: true, detail } };
  }
  const show = runValues[entry.field];
  const value = (v: string | null) => (v === null || v === "" ? null : show ? show(v, dateTime) : v);
  const what = capital(show ? entry.fieldLabel.replace(/\s*\([^)]*\)$/, "") : entry.fieldLabel);
  return { what, change: { event: false, from: value(entry.oldValue), to: value(entry.newValue) } };
}

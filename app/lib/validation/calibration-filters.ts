import { z } from "zod";
import { parseQueryFilters, type ParsedFilters } from "./query-filters";
import { calibrationKinds, calibrationKindLabels, standingLabels, type CalibrationStanding } from "~/lib/calibrations";

/**
 * The calibrations list's filters, as URL search parameters (all strings), read the way the runs
 * list reads its own: an empty value is "any", an unknown or repeated one is refused with a message
 * that names what can be used, so a shared link never silently shows something else.
 */
export const calibrationStandings = ["draft", "in_force", "past_due", "superseded"] as const satisfies readonly CalibrationStanding[];

export const calibrationFilterKeys = ["kind", "equipment", "standing", "q"] as const;
const knownKeys = new Set<string>(calibrationFilterKeys);

const list = (values: readonly string[], labels: Record<string, string>) => values.map((v) => `${v} (${labels[v]?.toLowerCase() ?? v})`).join(", ");

export const calibrationFiltersSchema = z.strictObject(
  {
    kind: z
      .enum(calibrationKinds, { error: (iss) => `There is no kind "${String(iss.input)}": kind is one of ${list(calibrationKinds, calibrationKindLabels)}.` })
      .optional(),
    equipment: z
      .string()
      .regex(/^[1-9]\d{0,9}$/, "equipment must be the id number of one item of equipment.")
      .transform(Number)
      .optional(),
    standing: z
      .enum(calibrationStandings, {
        error: (iss) => `There is no standing "${String(iss.input)}": standing is one of ${list(calibrationStandings, standingLabels)}.`,
      })
      .optional(),
    q: z
      .string()
      .trim()
      .max(100, "Search text (q) is limited to 100 characters.")
      // eslint-disable-next-line no-control-regex -- matching control characters is the point of this pattern
      .regex(/^[^\u0000-\u001f\u007f]*$/, "Search text (q) cannot contain control characters.")
      .optional(),
  },
  {
    error: (issue) =>
      issue.code === "unrecognized_keys"
        ? `Unknown filter ${issue.keys.map((k) => `"${k}"`).join(", ")}. The calibrations list filters by ${calibrationFilterKeys.join(", ")}.`
        : undefined,
  },
);

export type CalibrationFilters = z.output<typeof calibrationFiltersSchema>;
export type ParsedCalibrationFilters = ParsedFilters<CalibrationFilters>;

export function parseCalibrationFilters(params: URLSearchParams): ParsedCalibrationFilters {
  return parseQueryFilters(params, calibrationFiltersSchema, knownKeys);
}

/** The search string for a filter set, leaving out what is not set so links stay short. */
export function calibrationFiltersToSearch(filters: Partial<CalibrationFilters>): string {
  const p = new URLSearchParams();
  for (const key of calibrationFilterKeys) {
    const v = filters[key];
    if (v !== undefined && v !== "") p.set(key, String(v));
  }
  const s = p.toString();
  return s ? `?${s}` : "";
}

/** True when a calibration record (as the list shows it) passes the filters; text matches item, person or notes, any case. */
export function calibrationMatches(
  record: { kind: string; equipmentId: number; standing: string; equipmentName: string; performedByName: string; notes: string | null },
  filters: CalibrationFilters,
): boolean {
  if (filters.kind && record.kind !== filters.kind) return false;
  if (filters.equipment && record.equipmentId !== filters.equipment) return false;
  if (filters.standing && record.standing !== filters.standing) return false;
  if (filters.q) {
    const needle = filters.q.toLowerCase();
    if (![record.equipmentName, record.performedByName, record.notes ?? ""].some((t) => t.toLowerCase().includes(needle))) return false;
  }
  return true;
}

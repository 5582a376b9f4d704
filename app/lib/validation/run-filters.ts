import { z } from "zod";
import { parseQueryFilters, type ParsedFilters } from "./query-filters";
import { runStates, verdicts } from "~/lib/runs";

/** Fields the runs table (and GET /api/v1/runs) can sort by: each is a column of runs, so the database sorts. */
export const runSortFields = ["createdAt", "id", "setRateRpm", "waterDepthM", "waterTemperatureC", "frameCount", "state", "verdict"] as const;
export type RunSortField = (typeof runSortFields)[number];

export const pageSizes = [10, 25, 50, 100] as const;
export const DEFAULT_PAGE_SIZE = 25;

/** "none" finds runs that have no theory check yet. */
export const verdictFilterValues = [...verdicts, "none"] as const;

const isoDay = /^\d{4}-\d{2}-\d{2}$/;

function day(name: string) {
  return z
    .string()
    .regex(isoDay, `${name} must be a date written YYYY-MM-DD, for example 2025-03-14.`)
    .refine((v) => {
      const d = new Date(`${v}T00:00:00Z`);
      return !Number.isNaN(d.getTime()) && d.toISOString().slice(0, 10) === v;
    }, `${name} is not a real calendar date.`)
    .optional();
}

const id = (name: string) =>
  z
    .string()
    .regex(/^[1-9]\d{0,9}$/, `${name} must be the id number of one ${name}.`)
    .transform(Number)
    .optional();

/** The sort fields with the column names people see: "createdAt (logged), id (run), …". */
function sortChoices(): string {
  const label = (f: RunSortField) => (f === "id" ? "run" : runTableColumns.find((c) => c.id === f)?.label.toLowerCase());
  return runSortFields.map((f) => `${f} (${label(f) ?? f})`).join(", ");
}

/**
 * The runs table's query, as URL search parameters (all strings). Shared by the page, its data
 * route and the API, so a filtered view is the same link in all three.
 */
export const runFiltersSchema = z
  .strictObject(
    {
      table: id("table"),
      technician: id("technician"),
      state: z.enum(runStates, { error: `state must be one of ${runStates.join(", ")}.` }).optional(),
      verdict: z.enum(verdictFilterValues, { error: `verdict must be one of ${verdictFilterValues.join(", ")}.` }).optional(),
      from: day("from"),
      to: day("to"),
      // Control characters match nothing a person typed; a NUL above all: Sequelize writes WHERE values into the SQL text, which SQLite ends at a NUL.
      q: z
        .string()
        .trim()
        .max(100, "Search text (q) is limited to 100 characters.")
        // eslint-disable-next-line no-control-regex -- matching control characters is the point of this pattern
        .regex(/^[^\u0000-\u001f\u007f]*$/, "Search text (q) cannot contain control characters.")
        .optional(),
      sort: z.enum(runSortFields, { error: (iss) => `There is no sort "${String(iss.input)}": the runs list sorts by ${sortChoices()}.` }).default("createdAt"),
      dir: z
        .enum(["asc", "desc"], {
          error: (iss) => `There is no direction "${String(iss.input)}": dir is asc (oldest or smallest first) or desc (newest or largest first).`,
        })
        .default("desc"),
      page: z
        .string()
        .regex(/^\d{1,6}$/, "page must be a whole number from 1.")
        .transform(Number)
        .refine((n) => n >= 1, "page must be a whole number from 1.")
        .default(1),
      pageSize: z
        .string()
        .transform(Number)
        .refine((n) => (pageSizes as readonly number[]).includes(n), `pageSize must be one of ${pageSizes.join(", ")}.`)
        .default(DEFAULT_PAGE_SIZE),
    },
    {
      error: (issue) =>
        issue.code === "unrecognized_keys" ? `Unknown filter ${issue.keys.map((k) => `"${k}"`).join(", ")}. Known: ${runFilterKeys.join(", ")}.` : undefined,
    },
  )
  .refine((f) => !f.from || !f.to || f.from <= f.to, { message: "from must be on or before to.", path: ["from"] });

export type RunFilters = z.output<typeof runFiltersSchema>;

export type ParsedRunFilters = ParsedFilters<RunFilters>;

export const runFilterKeys = ["table", "technician", "state", "verdict", "from", "to", "q", "sort", "dir", "page", "pageSize"] as const;
const knownKeys = new Set<string>(runFilterKeys);

/** Reads the filters from a URL's search parameters; empty values count as absent, a repeated one is refused. */
export function parseRunFilters(params: URLSearchParams): ParsedRunFilters {
  return parseQueryFilters(params, runFiltersSchema, knownKeys);
}

/** The search string for a filter set, leaving out defaults so shared links stay short. */
export function runFiltersToSearch(filters: Partial<RunFilters>): string {
  const p = new URLSearchParams();
  const put = (k: string, v: string | number | undefined | null, dflt?: string | number) => {
    if (v !== undefined && v !== null && v !== "" && v !== dflt) p.set(k, String(v));
  };
  put("table", filters.table);
  put("technician", filters.technician);
  put("state", filters.state);
  put("verdict", filters.verdict);
  put("from", filters.from);
  put("to", filters.to);
  put("q", filters.q);
  put("sort", filters.sort, "createdAt");
  put("dir", filters.dir, "desc");
  put("page", filters.page, 1);
  put("pageSize", filters.pageSize, DEFAULT_PAGE_SIZE);
  const s = p.toString();
  return s ? `?${s}` : "";
}

/** Columns of the runs table a person can show or hide; the choice is kept per person. */
export const runTableColumns = [
  { id: "createdAt", label: "Logged", defaultVisible: true },
  { id: "table", label: "Table", defaultVisible: true },
  { id: "tank", label: "Tank", defaultVisible: false },
  { id: "camera", label: "Camera", defaultVisible: false },
  { id: "technician", label: "Technician", defaultVisible: true },
  { id: "setRateRpm", label: "Set rate", defaultVisible: true },
  { id: "waterDepthM", label: "Depth", defaultVisible: false },
  { id: "waterTemperatureC", label: "Water temp.", defaultVisible: false },
  { id: "cameraMode", label: "Camera mode", defaultVisible: false },
  { id: "tracer", label: "Tracer", defaultVisible: false },
  { id: "frameCount", label: "Frames", defaultVisible: false },
  { id: "state", label: "State", defaultVisible: true },
  { id: "verdict", label: "Verdict", defaultVisible: true },
  { id: "purpose", label: "Purpose", defaultVisible: true },
] as const;
export type RunTableColumnId = (typeof runTableColumns)[number]["id"];

export const runColumnChoiceSchema = z.object({
  hidden: z.array(z.enum(runTableColumns.map((c) => c.id) as [RunTableColumnId, ...RunTableColumnId[]])).max(runTableColumns.length),
});
export type RunColumnChoice = z.infer<typeof runColumnChoiceSchema>;

export const defaultRunColumnChoice: RunColumnChoice = {
  hidden: runTableColumns.filter((c) => !c.defaultVisible).map((c) => c.id),
};

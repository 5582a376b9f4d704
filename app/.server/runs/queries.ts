import { Op, type Order, type WhereOptions } from "sequelize";
import { Equipment, Run, User, UserPreference, sequelize } from "../db";
import type { z } from "zod";
import type { RunListItemView, runPageSchema } from "../openapi/responses/runs";
import { serializeRunListItem } from "./serialize";
import {
  defaultRunColumnChoice,
  parseRunFilters,
  runColumnChoiceSchema,
  type RunColumnChoice,
  type RunFilters,
  type RunSortField,
} from "~/lib/validation/run-filters";

/** Bad filters or a page past the end: the page shows the message, the API answers 400. */
export class RunFilterError extends Error {
  readonly status = 400;
  readonly code = "invalid_filter";
  constructor(
    message: string,
    readonly field: string | null,
  ) {
    super(message);
  }
}

/** Validates a URL's search parameters as runs-table filters or throws RunFilterError. */
export function runFiltersFrom(params: URLSearchParams): RunFilters {
  const parsed = parseRunFilters(params);
  if (!parsed.ok) throw new RunFilterError(parsed.message, parsed.field);
  return parsed.filters;
}

const sortColumns: Record<RunSortField, string> = {
  createdAt: "createdAt",
  id: "id",
  setRateRpm: "setRateRpm",
  waterDepthM: "waterDepthM",
  waterTemperatureC: "waterTemperatureC",
  frameCount: "frameCount",
  state: "state",
  verdict: "verdict",
};

/** Start of a YYYY-MM-DD day in the lab's (the server's) local time. */
function localDayStart(day: string, plusDays = 0): Date {
  const [y = Number.NaN, m = Number.NaN, d = Number.NaN] = day.split("-").map(Number);
  return new Date(y, m - 1, d + plusDays, 0, 0, 0, 0);
}

function likePattern(text: string) {
  // Search text is literal: % and _ typed by a person are not wildcards.
  return `%${text.toLowerCase().replace(/[\\%_]/g, (c) => `\\${c}`)}%`;
}

export function runsWhere(filters: RunFilters): WhereOptions<Run> {
  const and: WhereOptions<Run>[] = [];
  if (filters.table) and.push({ tableId: filters.table });
  if (filters.technician) and.push({ technicianId: filters.technician });
  if (filters.state) and.push({ state: filters.state });
  if (filters.verdict === "none") and.push({ verdict: { [Op.is]: null } });
  else if (filters.verdict) and.push({ verdict: filters.verdict });
  if (filters.from) and.push({ createdAt: { [Op.gte]: localDayStart(filters.from) } });
  if (filters.to) and.push({ createdAt: { [Op.lt]: localDayStart(filters.to, 1) } });
  if (filters.q) {
    const p = sequelize.escape(likePattern(filters.q));
    and.push(sequelize.literal(`(lower("Run"."purpose") LIKE ${p} ESCAPE '\\' OR lower(coalesce("Run"."notes", '')) LIKE ${p} ESCAPE '\\')`));
  }
  return and.length ? { [Op.and]: and } : {};
}

export type RunListItem = RunListItemView;
export type RunPage = z.infer<typeof runPageSchema>;

const listAttributes = [
  "id",
  "createdAt",
  "state",
  "verdict",
  "tableId",
  "tankId",
  "cameraId",
  "technicianId",
  "setRateRpm",
  "direction",
  "waterDepthM",
  "waterTemperatureC",
  "cameraMode",
  "tracer",
  "frameCount",
  "purpose",
  "signedOffAt",
  "supersedesId",
] as const;

/** One page of runs for the table and GET /api/v1/runs; sorting, filtering and paging all happen in the database. */
export async function listRuns(filters: RunFilters): Promise<RunPage> {
  const where = runsWhere(filters);
  const dir = filters.dir === "asc" ? "ASC" : "DESC";
  // id breaks ties so a page never repeats or skips a run; every index ends in the rowid, so this stays an index walk.
  const order: Order =
    filters.sort === "id"
      ? [["id", dir]]
      : [
          [sortColumns[filters.sort], dir],
          ["id", dir],
        ];
  const offset = (filters.page - 1) * filters.pageSize;
  const [total, rows] = await Promise.all([
    Run.count({ where }),
    Run.findAll({ where, order, limit: filters.pageSize, offset, attributes: [...listAttributes] }),
  ]);
  const pageCount = Math.max(1, Math.ceil(total / filters.pageSize));
  if (filters.page > pageCount) {
    throw new RunFilterError(
      total === 0
        ? `No runs match these filters, so there is only page 1 (page ${filters.page} was asked for).`
        : `Page ${filters.page} is past the last page: ${total} runs make ${pageCount} page${pageCount === 1 ? "" : "s"} of ${filters.pageSize}.`,
      "page",
    );
  }
  return { items: await listItems(rows), total, page: filters.page, pageSize: filters.pageSize, pageCount };
}

/** Rows of the runs table as list items, with equipment and people named. */
async function listItems(rows: Run[]): Promise<RunListItem[]> {
  const equipmentIds = [...new Set(rows.flatMap((r) => [r.tableId, r.tankId, r.cameraId]))];
  const userIds = [...new Set(rows.map((r) => r.technicianId))];
  const [equipment, users] = await Promise.all([
    equipmentIds.length ? Equipment.findAll({ where: { id: equipmentIds }, attributes: ["id", "name"] }) : [],
    userIds.length ? User.findAll({ where: { id: userIds }, attributes: ["id", "name"] }) : [],
  ]);
  const names = new Map(equipment.map((e) => [e.id, e.name]));
  const people = new Map(users.map((u) => [u.id, u.name]));
  const item = (id: number) => ({ id, name: names.get(id) ?? `#${id}` });
  return rows.map((r) => serializeRunListItem(r, { equipment: item, person: (id) => ({ id, name: people.get(id) ?? `#${id}` }) }));
}

/**
 * The first `limit` runs matching `filters` and how many match in all, from one statement (a window
 * count over the same WHERE), so the number a page shows beside a short list can never disagree with
 * the list: two statements could each see a different moment (a run signed off between them).
 */
export async function listRunsWithTotal(filters: Omit<RunFilters, "page" | "pageSize">, limit: number): Promise<{ items: RunListItem[]; total: number }> {
  const dir = filters.dir === "asc" ? "ASC" : "DESC";
  const rows = await Run.findAll({
    where: runsWhere({ ...filters, page: 1, pageSize: limit }),
    order: [
      [sortColumns[filters.sort], dir],
      ["id", dir],
    ],
    limit,
    attributes: [...listAttributes, [sequelize.literal("COUNT(*) OVER ()"), "matchingTotal"]],
  });
  const first = rows[0];
  return { items: await listItems(rows), total: first ? Number(first.get("matchingTotal")) : 0 };
}

/** The choices the filter bar offers: every table, and everyone who can log a run. */
export async function runFilterOptions() {
  const [tables, technicians] = await Promise.all([
    Equipment.findAll({ where: { kind: "table" }, attributes: ["id", "name"], order: [["name", "ASC"]] }),
    User.findAll({ where: { role: ["technician", "lab_manager"] }, attributes: ["id", "name"], order: [["name", "ASC"]] }),
  ]);
  return {
    tables: tables.map((t) => ({ id: t.id, name: t.name })),
    technicians: technicians.map((u) => ({ id: u.id, name: u.name })),
  };
}

const COLUMNS_KEY = "runs.columns";

export async function getRunColumnChoice(userId: number): Promise<RunColumnChoice> {
  const row = await UserPreference.findOne({ where: { userId, key: COLUMNS_KEY } });
  if (!row) return defaultRunColumnChoice;
  try {
    const parsed = runColumnChoiceSchema.safeParse(JSON.parse(row.value));
    // A saved choice that names a column since removed falls back to the defaults rather than failing the page.
    return parsed.success ? parsed.data : defaultRunColumnChoice;
  } catch {
    return defaultRunColumnChoice;
  }
}

/** One row per person and key (unique index): INSERT … ON CONFLICT DO UPDATE, so saves at once never collide. */
export async function saveRunColumnChoice(userId: number, choice: RunColumnChoice) {
  const value = JSON.stringify(runColumnChoiceSchema.parse(choice));
  await UserPreference.upsert({ userId, key: COLUMNS_KEY, value });
}

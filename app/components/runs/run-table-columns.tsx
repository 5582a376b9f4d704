/**
 * The runs list's columns for TanStack Table: what each cell shows, which the server sorts by, and
 * the headings the column chooser lists.
 */
import { Link } from "react-router";
import {
  columnVisibilityFeature,
  createColumnHelper,
  rowPaginationFeature,
  rowSortingFeature,
  tableFeatures,
  type ColumnVisibilityState,
  type Updater,
} from "@tanstack/react-table";
import { LabDateTime } from "~/components/lab-time";
import { RunStateTag, VerdictTag } from "~/components/run-record/tags";
import { formatNumber } from "~/lib/number-format";
import { tracerLabels } from "~/lib/runs";
import { runSortFields, runTableColumns } from "~/lib/validation/run-filters";
import type { RunListItem } from "~/.server/runs/queries";

export const runTableFeatures = tableFeatures({ columnVisibilityFeature, rowSortingFeature, rowPaginationFeature });
const col = createColumnHelper<typeof runTableFeatures, RunListItem>();
/** Columns the server can sort by. */
export const sortableRunColumns = new Set<string>(runSortFields);
/** A column's heading, by its id. */
export const runColumnLabel = Object.fromEntries(runTableColumns.map((c) => [c.id, c.label])) as Record<string, string>;

export const runColumns = col.columns([
  col.accessor("id", {
    id: "id",
    header: "Run",
    enableHiding: false,
    cell: (info) => (
      <Link to={`/runs/${info.row.original.id}`} className="inline-flex min-h-12 items-center font-mono text-lg font-bold whitespace-nowrap">
        {info.row.original.label}
      </Link>
    ),
  }),
  col.accessor("createdAt", { header: runColumnLabel.createdAt, cell: (info) => <LabDateTime value={info.getValue()} /> }),
  col.accessor((r) => r.table.name, { id: "table", header: runColumnLabel.table, enableSorting: false }),
  col.accessor((r) => r.tank.name, { id: "tank", header: runColumnLabel.tank, enableSorting: false }),
  col.accessor((r) => r.camera.name, { id: "camera", header: runColumnLabel.camera, enableSorting: false }),
  col.accessor((r) => r.technician.name, { id: "technician", header: runColumnLabel.technician, enableSorting: false }),
  col.accessor("setRateRpm", {
    header: runColumnLabel.setRateRpm,
    cell: (info) => `${formatNumber(info.getValue())} rpm ${info.row.original.direction === "ccw" ? "ccw" : "cw"}`,
  }),
  col.accessor("waterDepthM", { header: runColumnLabel.waterDepthM, cell: (info) => `${formatNumber(info.getValue() * 100)} cm` }),
  col.accessor("waterTemperatureC", { header: runColumnLabel.waterTemperatureC, cell: (info) => `${formatNumber(info.getValue(), 3)} °C` }),
  col.accessor("cameraMode", {
    header: runColumnLabel.cameraMode,
    enableSorting: false,
    cell: (info) => (info.getValue() === "lab" ? "Lab-fixed" : "Co-rotating"),
  }),
  col.accessor("tracer", { header: runColumnLabel.tracer, enableSorting: false, cell: (info) => tracerLabels[info.getValue()] }),
  col.accessor("frameCount", { header: runColumnLabel.frameCount }),
  col.accessor("state", { header: runColumnLabel.state, cell: (info) => <RunStateTag state={info.getValue()} /> }),
  col.accessor("verdict", {
    header: runColumnLabel.verdict,
    cell: (info) => <VerdictTag verdict={info.getValue()} outOfDate={info.row.original.state === "checked"} />,
  }),
  col.accessor("purpose", {
    header: runColumnLabel.purpose,
    enableSorting: false,
    cell: (info) => <span className="line-clamp-2 max-w-md">{info.getValue()}</span>,
  }),
]);

/** The table's visibility state for the hidden columns' ids. */
export function visibilityOf(hidden: readonly string[]): ColumnVisibilityState {
  return Object.fromEntries(hidden.map((id) => [id, false]));
}

/** A table updater applied to the current value. */
export const apply = <T,>(updater: Updater<T>, current: T): T => (typeof updater === "function" ? (updater as (old: T) => T)(current) : updater);

/** One empty list for every render, so the table does not see new data while a page loads. */
export const noRows: RunListItem[] = [];

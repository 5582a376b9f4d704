/**
 * The runs list's parts: the filter's fields, the column chooser, the table and its pager. The
 * page (routes/runs/list.tsx) holds the address, the table's state and the fetches.
 */
import { pageSizes, type RunFilters } from "~/lib/validation/run-filters";
import { runStates, runStateLabels } from "~/lib/runs";
import { Button } from "~/components/ui/button";
import { choicesByName, choicesOf, SelectField, TextField } from "~/components/ui/field";
import type { ReactTable } from "@tanstack/react-table";
import type { RunListItem } from "~/.server/runs/queries";
import { runColumnLabel, sortableRunColumns, type runTableFeatures } from "./run-table-columns";

type RunsReactTable = ReactTable<typeof runTableFeatures, RunListItem>;

/** The filter form's fields, filled from the address's filters. */
export function RunFilterFields({
  filters,
  options,
}: {
  filters: RunFilters;
  options: { tables: { id: number; name: string }[]; technicians: { id: number; name: string }[] };
}) {
  return (
    <>
      <SelectField label="Table" name="table" defaultValue={filters.table ?? ""} blank="Any table" choices={choicesByName(options.tables)} />
      <SelectField label="Technician" name="technician" defaultValue={filters.technician ?? ""} blank="Anyone" choices={choicesByName(options.technicians)} />
      <SelectField label="State" name="state" defaultValue={filters.state ?? ""} blank="Any state" choices={choicesOf(runStates, runStateLabels)} />
      <SelectField label="Verdict" name="verdict" defaultValue={filters.verdict ?? ""}>
        <option value="">Any verdict</option>
        <option value="agrees">Agrees</option>
        <option value="disagrees">Disagrees</option>
        <option value="inconclusive">Inconclusive</option>
        <option value="none">Not checked yet</option>
      </SelectField>
      <TextField label="Logged from" name="from" type="date" defaultValue={filters.from ?? ""} />
      <TextField label="Logged to" name="to" type="date" defaultValue={filters.to ?? ""} />
      <div className="md:col-span-2">
        <TextField label="Text in purpose or notes" name="q" type="search" defaultValue={filters.q ?? ""} maxLength={100} />
      </div>
    </>
  );
}

/** Which columns show; the choice is saved for the person (`saving`, and the server's `message`). */
export function RunColumnChooser({ table, saving, message }: { table: RunsReactTable; saving: boolean; message: string | undefined }) {
  return (
    <details className="relative max-sm:open:basis-full">
      <summary className="inline-flex min-h-12 cursor-pointer items-center rounded-lg border-2 border-line-strong px-5 font-bold">Columns</summary>
      <fieldset className="z-10 mt-2 grid w-72 max-w-full gap-1 sm:absolute rounded-card border border-line bg-sheet p-3 shadow-lg">
        <legend className="sr-only">Columns to show</legend>
        {table
          .getAllLeafColumns()
          .filter((c) => c.getCanHide())
          .map((c) => (
            <label key={c.id} className="flex min-h-12 items-center gap-3">
              <input type="checkbox" className="size-5" checked={c.getIsVisible()} onChange={c.getToggleVisibilityHandler()} />
              {runColumnLabel[c.id]}
            </label>
          ))}
        <p className="text-sm text-muted" role="status">
          {saving ? "Saving…" : (message ?? "Kept for you on every device.")}
        </p>
      </fieldset>
    </details>
  );
}

/** The page of runs, headings sorting on the server where they can. */
export function RunsTable({ table, loading }: { table: RunsReactTable; loading: boolean }) {
  return (
    <div className={`relative overflow-x-auto rounded-card border border-line bg-sheet ${loading ? "opacity-60" : ""}`} aria-busy={loading}>
      <table className="w-full text-left">
        <thead className="border-b-2 border-line-strong bg-paper">
          {table.getHeaderGroups().map((group) => (
            <tr key={group.id}>
              {group.headers.map((header) => {
                const sorted = header.column.getIsSorted();
                return (
                  <th
                    key={header.id}
                    scope="col"
                    className="px-3 py-2 align-bottom"
                    aria-sort={sorted === "asc" ? "ascending" : sorted === "desc" ? "descending" : undefined}
                  >
                    {header.column.getCanSort() && sortableRunColumns.has(header.column.id) ? (
                      <button
                        type="button"
                        onClick={header.column.getToggleSortingHandler()}
                        className="inline-flex min-h-12 items-center gap-1 font-bold text-tank-700 hover:underline"
                      >
                        <table.FlexRender header={header} />
                        <span aria-hidden="true">{sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}</span>
                        <span className="sr-only">{sorted ? `sorted ${sorted === "asc" ? "ascending" : "descending"}` : "sort"}</span>
                      </button>
                    ) : (
                      <span className="inline-flex min-h-12 items-center font-bold">
                        <table.FlexRender header={header} />
                      </span>
                    )}
                  </th>
                );
              })}
            </tr>
          ))}
        </thead>
        <tbody className="divide-y divide-line">
          {table.getRowModel().rows.map((row) => (
            <tr key={row.id} className="hover:bg-tank-50">
              {row.getVisibleCells().map((cell) => (
                <td key={cell.id} className="px-3 py-1 align-middle">
                  <table.FlexRender cell={cell} />
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

/** Previous and next page, and how many runs a page shows. */
export function RunsPager({ table, page, pageCount, pageSize }: { table: RunsReactTable; page: number; pageCount: number; pageSize: number }) {
  return (
    <nav aria-label="Pages" className="no-print mt-4 flex flex-wrap items-center gap-3">
      <Button type="button" tone="plain" onClick={() => table.previousPage()} disabled={!table.getCanPreviousPage()}>
        ← Previous page
      </Button>
      <span>
        Page {page} of {pageCount}
      </span>
      <Button type="button" tone="plain" onClick={() => table.nextPage()} disabled={!table.getCanNextPage()}>
        Next page →
      </Button>
      <label className="ml-auto flex items-center gap-2">
        Runs per page
        <select
          className="min-h-12 rounded-lg border-2 border-line-strong bg-sheet px-3"
          value={pageSize}
          onChange={(e) => table.setPageSize(Number(e.target.value))}
        >
          {pageSizes.map((n) => (
            <option key={n} value={n}>
              {n}
            </option>
          ))}
        </select>
      </label>
    </nav>
  );
}

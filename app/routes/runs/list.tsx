import { useEffect, useRef, useState, type FormEvent } from "react";
import { data, Link, useFetcher, useLocation, useSearchParams, type ShouldRevalidateFunctionArgs } from "react-router";
import {
  columnVisibilityFeature,
  createColumnHelper,
  rowPaginationFeature,
  rowSortingFeature,
  tableFeatures,
  useTable,
  type ColumnVisibilityState,
  type PaginationState,
  type SortingState,
  type Updater,
} from "@tanstack/react-table";
import type { Route } from "./+types/list";
import { readForm } from "~/.server/http";
import type { loader as rowsLoader } from "./rows";
import { requireUser } from "~/.server/auth/permissions";
import {
  getRunColumnChoice,
  listRuns,
  RunFilterError,
  runFilterOptions,
  runFiltersFrom,
  saveRunColumnChoice,
  type RunListItem,
  type RunPage,
} from "~/.server/runs/queries";
import { Button, ButtonLink } from "~/components/ui/button";
import { PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { SelectField, TextField } from "~/components/ui/field";
import { RunStateTag, VerdictTag } from "~/components/run-record/tags";
import { formatNumber } from "~/lib/number-format";
import { LabDateTime } from "~/components/lab-time";
import { runStates, runStateLabels, tracerLabels } from "~/lib/runs";
import {
  DEFAULT_PAGE_SIZE,
  pageSizes,
  parseRunFilters,
  runColumnChoiceSchema,
  runFiltersToSearch,
  runSortFields,
  runTableColumns,
  type RunFilters,
  type RunSortField,
} from "~/lib/validation/run-filters";
import { formText } from "~/lib/form-text";

export const meta: Route.MetaFunction = () => [{ title: "Runs · Tankside" }];

type PageResult = { page: RunPage; error: null } | { page: null; error: { message: string; field: string | null } };

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const [options, columns] = await Promise.all([runFilterOptions(), getRunColumnChoice(user.id)]);
  const canLog = user.role === "technician" || user.role === "lab_manager";
  let result: PageResult;
  try {
    result = { page: await listRuns(runFiltersFrom(new URL(request.url).searchParams)), error: null };
  } catch (err) {
    if (!(err instanceof RunFilterError)) throw err;
    result = { page: null, error: { message: err.message, field: err.field } };
    return data({ options, columns, canLog, result }, { status: 400 });
  }
  return { options, columns, canLog, result };
}

/** Saves the person's column choice; the table itself is already showing it. */
export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await readForm(request);
  if (form.get("intent") !== "columns") return data({ ok: false, message: "Unknown action." }, { status: 400 });
  let hidden: unknown;
  try {
    hidden = JSON.parse(formText(form, "hidden", "[]"));
  } catch {
    return data({ ok: false, message: "The column choice could not be read." }, { status: 400 });
  }
  const parsed = runColumnChoiceSchema.safeParse({ hidden });
  if (!parsed.success) return data({ ok: false, message: "That column choice names a column the table does not have." }, { status: 400 });
  await saveRunColumnChoice(user.id, parsed.data);
  return { ok: true, message: "Column choice saved." };
}

/** Filter, sort and page changes fetch through the rows route; the page's own loader runs only on a full load. */
export function shouldRevalidate({ currentUrl, nextUrl, formData, defaultShouldRevalidate }: ShouldRevalidateFunctionArgs) {
  if (formData?.get("intent") === "columns") return false;
  if (currentUrl.pathname === nextUrl.pathname && currentUrl.search !== nextUrl.search) return false;
  return defaultShouldRevalidate;
}

const features = tableFeatures({ columnVisibilityFeature, rowSortingFeature, rowPaginationFeature });
const col = createColumnHelper<typeof features, RunListItem>();
const sortable = new Set<string>(runSortFields);
const labelOf = Object.fromEntries(runTableColumns.map((c) => [c.id, c.label])) as Record<string, string>;

const columns = col.columns([
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
  col.accessor("createdAt", { header: labelOf.createdAt, cell: (info) => <LabDateTime value={info.getValue()} /> }),
  col.accessor((r) => r.table.name, { id: "table", header: labelOf.table, enableSorting: false }),
  col.accessor((r) => r.tank.name, { id: "tank", header: labelOf.tank, enableSorting: false }),
  col.accessor((r) => r.camera.name, { id: "camera", header: labelOf.camera, enableSorting: false }),
  col.accessor((r) => r.technician.name, { id: "technician", header: labelOf.technician, enableSorting: false }),
  col.accessor("setRateRpm", {
    header: labelOf.setRateRpm,
    cell: (info) => `${formatNumber(info.getValue())} rpm ${info.row.original.direction === "ccw" ? "ccw" : "cw"}`,
  }),
  col.accessor("waterDepthM", { header: labelOf.waterDepthM, cell: (info) => `${formatNumber(info.getValue() * 100)} cm` }),
  col.accessor("waterTemperatureC", { header: labelOf.waterTemperatureC, cell: (info) => `${formatNumber(info.getValue(), 3)} °C` }),
  col.accessor("cameraMode", { header: labelOf.cameraMode, enableSorting: false, cell: (info) => (info.getValue() === "lab" ? "Lab-fixed" : "Co-rotating") }),
  col.accessor("tracer", { header: labelOf.tracer, enableSorting: false, cell: (info) => tracerLabels[info.getValue()] }),
  col.accessor("frameCount", { header: labelOf.frameCount }),
  col.accessor("state", { header: labelOf.state, cell: (info) => <RunStateTag state={info.getValue()} /> }),
  col.accessor("verdict", {
    header: labelOf.verdict,
    cell: (info) => <VerdictTag verdict={info.getValue()} outOfDate={info.row.original.state === "checked"} />,
  }),
  col.accessor("purpose", {
    header: labelOf.purpose,
    enableSorting: false,
    cell: (info) => <span className="line-clamp-2 max-w-md">{info.getValue()}</span>,
  }),
]);

function visibilityOf(hidden: readonly string[]): ColumnVisibilityState {
  return Object.fromEntries(hidden.map((id) => [id, false]));
}

const apply = <T,>(updater: Updater<T>, current: T): T => (typeof updater === "function" ? (updater as (old: T) => T)(current) : updater);

/** One empty list for every render, so the table does not see new data while a page loads. */
const noRows: RunListItem[] = [];

export default function RunsList({ loaderData }: Route.ComponentProps) {
  const location = useLocation();
  const [searchParams, setSearchParams] = useSearchParams();
  const rows = useFetcher<typeof rowsLoader>();
  const saveColumns = useFetcher<typeof action>();
  const loadedFor = useRef(location.search);
  const loadRows = rows.load;

  useEffect(() => {
    // Back/forward and filter changes alike: fetch the page the address describes, keeping the old one on screen meanwhile.
    if (loadedFor.current === location.search) return;
    loadedFor.current = location.search;
    void loadRows(`/runs/rows${location.search}`);
  }, [location.search, loadRows]);

  const result: PageResult = rows.data ?? loaderData.result;
  const parsed = parseRunFilters(searchParams);
  const filters: RunFilters = parsed.ok ? parsed.filters : { sort: "createdAt", dir: "desc", page: 1, pageSize: DEFAULT_PAGE_SIZE };
  const [hidden, setHidden] = useState<string[]>(loaderData.columns.hidden);

  const go = (next: Partial<RunFilters>) => {
    setSearchParams(new URLSearchParams(runFiltersToSearch({ ...filters, ...next })), { preventScrollReset: true });
  };

  const sorting: SortingState = [{ id: filters.sort === "id" ? "id" : filters.sort, desc: filters.dir === "desc" }];
  const pagination: PaginationState = { pageIndex: filters.page - 1, pageSize: filters.pageSize };

  const table = useTable({
    features,
    columns,
    data: result.page?.items ?? noRows,
    getRowId: (r) => String(r.id),
    state: { sorting, pagination, columnVisibility: visibilityOf(hidden) },
    manualSorting: true,
    manualPagination: true,
    rowCount: result.page?.total ?? 0,
    enableMultiSort: false,
    enableSortingRemoval: false,
    onSortingChange: (updater) => {
      const next = apply(updater, sorting)[0];
      if (next && sortable.has(next.id)) go({ sort: next.id as RunSortField, dir: next.desc ? "desc" : "asc", page: 1 });
    },
    onPaginationChange: (updater) => {
      const next = apply(updater, pagination);
      go({ page: next.pageIndex + 1, pageSize: next.pageSize });
    },
    onColumnVisibilityChange: (updater) => {
      const next = apply(updater, visibilityOf(hidden));
      const nextHidden = runTableColumns.map((c) => c.id as string).filter((id) => next[id] === false);
      setHidden(nextHidden);
      void saveColumns.submit({ intent: "columns", hidden: JSON.stringify(nextHidden) }, { method: "post" });
    },
  });

  const onFilter = (event: FormEvent<HTMLFormElement>) => {
    event.preventDefault();
    const form = new FormData(event.currentTarget);
    const text = (k: string) => {
      const v = formText(form, k).trim();
      return v === "" ? undefined : v;
    };
    const num = (k: string) => (text(k) ? Number(text(k)) : undefined);
    go({
      table: num("table"),
      technician: num("technician"),
      state: text("state") as RunFilters["state"],
      verdict: text("verdict") as RunFilters["verdict"],
      from: text("from"),
      to: text("to"),
      q: text("q"),
      page: 1,
    });
  };
  const submitOnChange = (event: FormEvent<HTMLFormElement>) => {
    // Choices apply at once; typed search text waits for Enter or the button.
    if ((event.target as HTMLElement).tagName === "SELECT" || (event.target as HTMLInputElement).type === "date") event.currentTarget.requestSubmit();
  };

  const loading = rows.state !== "idle";
  const page = result.page;
  const hasFilters = Boolean(filters.table || filters.technician || filters.state || filters.verdict || filters.from || filters.to || filters.q);

  return (
    <div>
      <PageHeader
        title="Runs"
        subtitle="Every run the lab has logged. Filter, sort and page here; the address is a link to this exact view."
        actions={
          loaderData.canLog ? (
            <ButtonLink to="/runs/new" tone="primary">
              Log a run
            </ButtonLink>
          ) : null
        }
      />

      <form
        key={location.search}
        onSubmit={onFilter}
        onChange={submitOnChange}
        className="no-print mb-4 grid gap-4 rounded-card border border-line bg-sheet p-4 md:grid-cols-4"
        aria-label="Filter runs"
      >
        <SelectField label="Table" name="table" defaultValue={filters.table ?? ""}>
          <option value="">Any table</option>
          {loaderData.options.tables.map((t) => (
            <option key={t.id} value={t.id}>
              {t.name}
            </option>
          ))}
        </SelectField>
        <SelectField label="Technician" name="technician" defaultValue={filters.technician ?? ""}>
          <option value="">Anyone</option>
          {loaderData.options.technicians.map((u) => (
            <option key={u.id} value={u.id}>
              {u.name}
            </option>
          ))}
        </SelectField>
        <SelectField label="State" name="state" defaultValue={filters.state ?? ""}>
          <option value="">Any state</option>
          {runStates.map((s) => (
            <option key={s} value={s}>
              {runStateLabels[s]}
            </option>
          ))}
        </SelectField>
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
        <div className="flex flex-wrap items-end gap-3 md:col-span-4">
          <Button type="submit">Search</Button>
          {hasFilters ? (
            <ButtonLink to="/runs" tone="quiet">
              Clear filters
            </ButtonLink>
          ) : null}
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
                    {labelOf[c.id]}
                  </label>
                ))}
              <p className="text-sm text-muted" role="status">
                {saveColumns.state !== "idle" ? "Saving…" : (saveColumns.data?.message ?? "Kept for you on every device.")}
              </p>
            </fieldset>
          </details>
        </div>
      </form>

      {result.error ? (
        <Notice kind="error" title="These filters cannot be used">
          <p>{result.error.message}</p>
          <p className="mt-2">
            <Link to="/runs">Show all runs</Link>
          </p>
        </Notice>
      ) : null}

      {page ? (
        <>
          <p className="mb-2 text-muted" role="status" aria-live="polite">
            {loading
              ? "Loading…"
              : page.total === 0
                ? "No runs match."
                : `${page.total} run${page.total === 1 ? "" : "s"} · page ${page.page} of ${page.pageCount}`}
          </p>
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
                          {header.column.getCanSort() && sortable.has(header.column.id) ? (
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
          <nav aria-label="Pages" className="no-print mt-4 flex flex-wrap items-center gap-3">
            <Button type="button" tone="plain" onClick={() => table.previousPage()} disabled={!table.getCanPreviousPage()}>
              ← Previous page
            </Button>
            <span>
              Page {page.page} of {page.pageCount}
            </span>
            <Button type="button" tone="plain" onClick={() => table.nextPage()} disabled={!table.getCanNextPage()}>
              Next page →
            </Button>
            <label className="ml-auto flex items-center gap-2">
              Runs per page
              <select
                className="min-h-12 rounded-lg border-2 border-line-strong bg-sheet px-3"
                value={filters.pageSize}
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
        </>
      ) : null}
    </div>
  );
}

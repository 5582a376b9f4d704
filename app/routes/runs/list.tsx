import { useEffect, useRef, useState, type FormEvent } from "react";
import { data, Link, useFetcher, useLocation, useSearchParams, type ShouldRevalidateFunctionArgs } from "react-router";
import { useTable, type PaginationState, type SortingState } from "@tanstack/react-table";
import type { Route } from "./+types/list";
import { readForm } from "~/.server/http";
import type { loader as rowsLoader } from "./rows";
import { requireUser } from "~/.server/auth/permissions";
import { getRunColumnChoice, listRuns, RunFilterError, runFilterOptions, runFiltersFrom, saveRunColumnChoice, type RunPage } from "~/.server/runs/queries";
import { Button, ButtonLink } from "~/components/ui/button";
import { PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { apply, noRows, runColumns, runTableFeatures, sortableRunColumns, visibilityOf } from "~/components/runs/run-table-columns";
import { RunColumnChooser, RunFilterFields, RunsPager, RunsTable } from "~/components/runs/runs-table";
import {
  DEFAULT_PAGE_SIZE,
  parseRunFilters,
  runColumnChoiceSchema,
  runFiltersToSearch,
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
    features: runTableFeatures,
    columns: runColumns,
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
      if (next && sortableRunColumns.has(next.id)) go({ sort: next.id as RunSortField, dir: next.desc ? "desc" : "asc", page: 1 });
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
        <RunFilterFields filters={filters} options={loaderData.options} />
        <div className="flex flex-wrap items-end gap-3 md:col-span-4">
          <Button type="submit">Search</Button>
          {hasFilters ? (
            <ButtonLink to="/runs" tone="quiet">
              Clear filters
            </ButtonLink>
          ) : null}
          <RunColumnChooser table={table} saving={saveColumns.state !== "idle"} message={saveColumns.data?.message} />
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
          <RunsTable table={table} loading={loading} />
          <RunsPager table={table} page={page.page} pageCount={page.pageCount} pageSize={filters.pageSize} />
        </>
      ) : null}
    </div>
  );
}

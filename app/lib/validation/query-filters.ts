import type { z } from "zod";

/** Search params the router adds to data requests; they are not filters. */
const routerParams = new Set(["index", "_routes", "_data"]);

export type ParsedFilters<T> = { ok: true; filters: T } | { ok: false; field: string | null; message: string };

/**
 * Reads a list page's filters from a URL's search parameters against its schema: empty values of
 * known keys count as absent (an untouched select), an unknown key is refused even when empty, and
 * a repeated key is refused. The first problem is named with the field it belongs to.
 */
export function parseQueryFilters<S extends z.ZodType>(params: URLSearchParams, schema: S, knownKeys: ReadonlySet<string>): ParsedFilters<z.output<S>> {
  const raw: Record<string, string> = {};
  for (const key of new Set(params.keys())) {
    if (routerParams.has(key)) continue;
    const values = params.getAll(key);
    if (values.length > 1) return { ok: false, field: key, message: `Give ${key} once; it was given ${values.length} times.` };
    const value = values[0] ?? "";
    if (value !== "" || !knownKeys.has(key)) raw[key] = value;
  }
  const result = schema.safeParse(raw);
  if (result.success) return { ok: true, filters: result.data };
  const issue = result.error.issues[0];
  if (!issue) return { ok: false, field: null, message: "These filters cannot be read." };
  const field = issue.code === "unrecognized_keys" ? (issue.keys[0] ?? null) : typeof issue.path[0] === "string" ? issue.path[0] : null;
  return { ok: false, field, message: issue.message };
}

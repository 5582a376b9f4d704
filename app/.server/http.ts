import { data } from "react-router";

/** The API's one error shape: {"error": {"code", "message"}} with a status that means what it says. */
export function apiError(status: number, code: string, message: string, extra?: Record<string, unknown>) {
  return Response.json({ error: { code, message, ...extra } }, { status });
}

export function isApiRequest(request: Request) {
  return new URL(request.url).pathname.startsWith("/api/");
}

/** A 404 thrown from a page loader or action, or the JSON error from the API. */
export function notFound(request: Request, what = "That page") {
  if (isApiRequest(request)) return apiError(404, "not_found", `${what} does not exist.`);
  return data(`${what} does not exist.`, { status: 404 });
}

/**
 * Where a text value holds a NUL character ("\u0000"), as "field" or "field.0.name"; null if none does.
 * No one types one; PostgreSQL refuses it in text and SQLite would end the text there. Walked with
 * a list, not recursion: a body nested 10 000 deep must get its 400 from the schema, not a 500 here.
 */
export function nulCharacterAt(body: unknown): string | null {
  const pending: { value: unknown; path: string }[] = [{ value: body, path: "" }];
  while (pending.length) {
    const { value, path } = pending.pop()!;
    if (typeof value === "string" && value.includes("\u0000")) return path || "(the body)";
    if (value && typeof value === "object") {
      for (const [key, inner] of Object.entries(value)) pending.push({ value: inner, path: path ? `${path}.${key}` : key });
    }
  }
  return null;
}

const nulMessage = (field: string) => `${field} contains a NUL character (\\u0000), which text in Tankside cannot hold.`;

export async function readJson(request: Request): Promise<unknown> {
  const type = request.headers.get("Content-Type") ?? "";
  if (!type.includes("application/json")) {
    throw apiError(415, "unsupported_media_type", "Send the body as JSON (Content-Type: application/json).");
  }
  let body: unknown;
  try {
    body = await request.json();
  } catch {
    throw apiError(400, "invalid_json", "The body is not valid JSON.");
  }
  const nul = nulCharacterAt(body);
  if (nul !== null) throw apiError(400, "invalid_input", nulMessage(nul), { field: nul });
  return body;
}

/** Ids are PostgreSQL INTEGER columns: 2^31 − 1 is the largest any row can have. */
export const MAX_ID = 2_147_483_647;

/**
 * A route's id parameter: a positive whole number in plain decimal digits up to MAX_ID, or the
 * page's or API's 404. `abc`, `1e309`, `-1`, `0x10` and `1.5` name nothing, and must never reach a
 * query as NaN; 2147483648 names nothing either, and PostgreSQL refuses it as out of range.
 */
export function parseId(request: Request, value: string | undefined, what = "That record"): number {
  if (value && /^[1-9]\d{0,9}$/.test(value) && Number(value) <= MAX_ID) return Number(value);
  throw notFound(request, what);
}

const formTypes = ["application/x-www-form-urlencoded", "multipart/form-data"];

/**
 * The submitted form. No body at all reads as an empty form, so the action answers with its own
 * "missing field" message; a body that is not a form (415) or cannot be parsed (400) is refused
 * here instead of ending in a 500.
 */
export async function readForm(request: Request): Promise<FormData> {
  const type = (request.headers.get("Content-Type") ?? "").toLowerCase();
  const length = request.headers.get("Content-Length");
  if (!formTypes.some((t) => type.startsWith(t))) {
    const empty = request.body === null || length === "0" || (!type && length === null && !request.headers.has("Transfer-Encoding"));
    if (empty) return new FormData();
    const message = "Send the form as application/x-www-form-urlencoded or multipart/form-data.";
    throw isApiRequest(request) ? apiError(415, "unsupported_media_type", message) : data(message, { status: 415 });
  }
  let form: FormData;
  try {
    form = await request.formData();
  } catch {
    const message = "The form could not be read.";
    throw isApiRequest(request) ? apiError(400, "invalid_form", message) : data(message, { status: 400 });
  }
  for (const [name, value] of form) {
    if (typeof value === "string" && value.includes("\u0000")) {
      throw isApiRequest(request) ? apiError(400, "invalid_input", nulMessage(name), { field: name }) : data(nulMessage(name), { status: 400 });
    }
  }
  return form;
}

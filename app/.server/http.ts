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

export async function readJson(request: Request): Promise<unknown> {
  const type = request.headers.get("Content-Type") ?? "";
  if (!type.includes("application/json")) {
    throw apiError(415, "unsupported_media_type", "Send the body as JSON (Content-Type: application/json).");
  }
  try {
    return await request.json();
  } catch {
    throw apiError(400, "invalid_json", "The body is not valid JSON.");
  }
}

/**
 * A route's id parameter: a positive whole number in plain decimal digits, or the page's or API's
 * 404. `abc`, `1e309`, `-1`, `0x10` and `1.5` name nothing, and must never reach a query as NaN.
 */
export function parseId(request: Request, value: string | undefined, what = "That record"): number {
  if (value && /^[1-9]\d{0,14}$/.test(value)) return Number(value);
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
  try {
    return await request.formData();
  } catch {
    const message = "The form could not be read.";
    throw isApiRequest(request) ? apiError(400, "invalid_form", message) : data(message, { status: 400 });
  }
}

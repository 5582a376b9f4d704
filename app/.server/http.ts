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

/**
 * The API's answers checked against its OpenAPI document: for a (path template, method, status)
 * the document lists, the body must pass that answer's schema under ajv's JSON Schema 2020-12
 * (the dialect of OpenAPI 3.1); a status the document does not list for the operation fails.
 * `callApi` calls a route module as React Router would and checks what comes back, so every API
 * test that uses it checks every answer it receives without code of its own.
 */
import { Ajv2020, type ValidateFunction } from "ajv/dist/2020.js";
import addFormatsModule from "ajv-formats";
import { buildOpenApiDocument } from "~/.server/openapi/document";

const addFormats = addFormatsModule as unknown as (ajv: Ajv2020) => Ajv2020;
const DOC_ID = "https://tankside.example/openapi.json";
type Operation = { responses: Record<string, { content?: Record<string, { schema?: unknown }> }> };
type Doc = { paths: Record<string, Record<string, Operation>> };

export const openApiDocument = buildOpenApiDocument();
const doc = openApiDocument as unknown as Doc;

const ajv = new Ajv2020({ allErrors: true, strict: false });
addFormats(ajv);
ajv.addFormat("binary", true);
ajv.addSchema({ $id: DOC_ID, paths: doc.paths, components: openApiDocument.components });

const pointer = (...parts: string[]) => parts.map((p) => p.replace(/~/g, "~0").replace(/\//g, "~1")).join("/");
const compiled = new Map<string, ValidateFunction>();
function validatorFor(template: string, method: string, status: string, mediaType: string) {
  const ref = `${DOC_ID}#/${pointer("paths", template, method, "responses", status, "content", mediaType, "schema")}`;
  let validate = compiled.get(ref);
  if (!validate) {
    validate = ajv.compile({ $ref: ref });
    compiled.set(ref, validate);
  }
  return validate;
}

const templates = Object.keys(doc.paths).map((template) => ({
  template,
  pattern: new RegExp(`^${template.replace(/[.]/g, "\\.").replace(/\{\w+\}/g, "[^/]+")}$`),
}));

/** The document's path template for a URL path, e.g. /api/v1/runs/7 → /api/v1/runs/{id}; null if it documents none. */
export function pathTemplateOf(pathname: string) {
  return templates.find((t) => t.pattern.test(pathname))?.template ?? null;
}

export interface Answer {
  status: number;
  contentType: string | null;
  /** The parsed JSON body, when the answer is JSON. */
  json?: unknown;
}

/**
 * What is wrong with this answer by the document: an empty list when nothing. An unrouted path or
 * a method the path does not document (the server's 405, or 401/403 when the route asks who is calling first) is checked against the Error schema only.
 */
export function contractProblems(method: string, pathname: string, answer: Answer): string[] {
  const template = pathTemplateOf(pathname);
  if (!template) return [];
  const m = method.toLowerCase();
  const operation = doc.paths[template]?.[m];
  const where = `${method.toUpperCase()} ${template} → ${answer.status}`;
  if (!operation) {
    // A method the path does not have: 405 (or 404), after the route has asked who is calling (401, 403).
    if (![401, 403, 404, 405].includes(answer.status))
      return [`${where}: the document has no ${method.toUpperCase()} here, yet the answer is not 401, 403, 404 or 405`];
    return schemaProblems(where, validatorFor("/api/v1/me", "get", "401", "application/json"), answer.json);
  }
  const documented = operation.responses[String(answer.status)];
  if (!documented)
    return [`${where}: status ${answer.status} is not documented for this operation (documented: ${Object.keys(operation.responses).join(", ")})`];
  const types = Object.keys(documented.content ?? {});
  if (types.length === 0) return [];
  const isJson = (answer.contentType ?? "").includes("application/json");
  if (isJson) {
    if (!types.includes("application/json")) return [`${where}: answered JSON, documented as ${types.join(", ")}`];
    return schemaProblems(where, validatorFor(template, m, String(answer.status), "application/json"), answer.json);
  }
  const given = (answer.contentType ?? "").split(";")[0]?.trim() ?? "";
  if (!types.some((t) => t === given || t === "application/octet-stream"))
    return [`${where}: answered ${given || "no content type"}, documented as ${types.join(", ")}`];
  return [];
}

function schemaProblems(where: string, validate: ValidateFunction, body: unknown): string[] {
  if (validate(body)) return [];
  return (validate.errors ?? []).map((e) => {
    const extra = e.keyword === "additionalProperties" ? ` (${String((e.params as { additionalProperty?: string }).additionalProperty)})` : "";
    return `${where}: ${e.instancePath || "(body)"} ${e.message ?? e.keyword}${extra}`;
  });
}

/** Throws, naming every problem, when the answer does not match the document. */
export function assertDocumented(method: string, url: string, answer: Answer) {
  const problems = contractProblems(method, new URL(url, "http://localhost").pathname, answer);
  if (problems.length) throw new Error(`The answer does not match the OpenAPI document:\n${problems.join("\n")}`);
}

/** Reads a Response (a clone: the caller can still read it) and checks it against the document. */
export async function assertResponseDocumented(request: Request, response: Response) {
  const contentType = response.headers.get("Content-Type");
  const text = await response.clone().text();
  let json: unknown;
  if ((contentType ?? "").includes("application/json")) json = text ? JSON.parse(text) : null;
  assertDocumented(request.method, request.url, { status: response.status, contentType, json });
}

type Handler = (args: never) => unknown;

/**
 * Calls a route module's loader or action the way React Router does (a thrown Response is the
 * answer) and checks the answer against the OpenAPI document before handing it back.
 */
export async function callApi(fn: Handler, request: Request, params: Record<string, string> = {}): Promise<Response> {
  let response: Response;
  try {
    response = (await fn({ request, params, context: {} } as never)) as Response;
  } catch (thrown) {
    if (!(thrown instanceof Response)) throw thrown;
    response = thrown;
  }
  await assertResponseDocumented(request, response);
  return response;
}

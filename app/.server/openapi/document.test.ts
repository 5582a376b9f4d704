import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { buildOpenApiDocument } from "./document";
import SwaggerParser from "@apidevtools/swagger-parser";
import { runCreateExample, runPatchExample } from "./paths/runs";
import { contractProblems } from "../../../tests/support/api-contract";
import { runApiCreateSchema, runApiPatchSchema } from "~/lib/validation/run-api";
import { parseRunFilters, runFilterKeys, runSortFields } from "~/lib/validation/run-filters";

const root = path.resolve(import.meta.dirname, "../../..");
type Op = {
  operationId: string;
  security: unknown[];
  parameters?: { name: string; schema: { enum?: string[] } }[];
  requestBody?: { content: Record<string, { example?: unknown; schema?: unknown }> };
  responses: Record<string, { content?: Record<string, { schema?: unknown }> }>;
};
type Schema = { additionalProperties?: unknown; properties: Record<string, unknown>; required: string[] };
type Doc = {
  openapi: string;
  paths: Record<string, Record<string, Op>>;
  components: { schemas: Record<string, Schema>; securitySchemes: Record<string, unknown> };
};
const doc = buildOpenApiDocument() as unknown as Doc;
const methods = ["get", "post", "patch", "put", "delete"] as const;

/** The API routes as app/routes.ts registers them: path in OpenAPI form → route module file. */
function apiRoutes(): Map<string, string> {
  const source = fs.readFileSync(path.join(root, "app/routes.ts"), "utf8");
  const block = /prefix\("api\/v1",\s*\[([\s\S]*?)\]\)/.exec(source);
  if (!block) throw new Error("no api/v1 prefix in app/routes.ts");
  const routes = new Map<string, string>();
  for (const m of block[1]!.matchAll(/route\("([^"]+)",\s*"([^"]+)"/g)) {
    if (m[1] === "*") continue;
    routes.set(`/api/v1/${m[1]!.replace(/:(\w+)/g, "{$1}")}`, m[2]!);
  }
  return routes;
}

describe("the OpenAPI document and the routes hold together", () => {
  it("passes swagger-parser's validation (OpenAPI 3.1 schema, every $ref resolves)", async () => {
    // validate() dereferences the object it is given: hand it a copy.
    await expect(SwaggerParser.validate(structuredClone(buildOpenApiDocument()) as never)).resolves.toBeTruthy();
    // And it does refuse what was wrong before: a $ref to a schema the document does not include.
    const broken = structuredClone(buildOpenApiDocument()) as unknown as Doc;
    const get = broken.paths["/api/v1/me"]?.get?.responses["200"]?.content?.["application/json"];
    if (!get) throw new Error("GET /api/v1/me has no JSON answer");
    get.schema = { $ref: "#/components/schemas/Booking2" };
    await expect(SwaggerParser.validate(broken as never)).rejects.toThrow(/Booking2/);
  });

  it("gives every operation an operationId, security, a 401 unless public, and errors in the one Error schema", () => {
    const ids = new Set<string>();
    for (const [p, item] of Object.entries(doc.paths)) {
      for (const [method, op] of Object.entries(item)) {
        const where = `${method.toUpperCase()} ${p}`;
        expect(op.operationId, where).toMatch(/^[a-z][A-Za-z]+$/);
        expect(ids.has(op.operationId), `${where}: operationId ${op.operationId} twice`).toBe(false);
        ids.add(op.operationId);
        expect(Array.isArray(op.security), where).toBe(true);
        if (op.security.length) expect(op.responses["401"], where).toBeDefined();
        for (const [status, answer] of Object.entries(op.responses)) {
          if (Number(status) < 400 || (status === "422" && p.endsWith("/frames"))) continue;
          expect(answer.content?.["application/json"]?.schema, `${where} ${status}`).toEqual({ $ref: "#/components/schemas/Error" });
        }
      }
    }
  });

  it("lists every field a response schema has as required, and allows no other field", () => {
    for (const name of [
      "Run",
      "RunDetail",
      "RunExport",
      "RunListItem",
      "Booking",
      "Calibration",
      "Equipment",
      "Person",
      "OutboxMail",
      "Error",
      "TrackingJob",
    ]) {
      const schema = doc.components.schemas[name];
      if (!schema) throw new Error(`no schema ${name}`);
      expect(schema.additionalProperties, name).toBe(false);
      const optional = Object.keys(schema.properties).filter((k) => !schema.required.includes(k));
      // What may be left out: an unknown value (JSON Schema cannot require one), and the Error's own extras.
      expect(
        optional.filter((k) => !["field", "issues", "scalePoints", "calibrationsApplied", "theoryCheckInput"].includes(k)),
        name,
      ).toEqual([]);
    }
  });

  it("catches an answer with a field the document lacks, naming it", () => {
    const run = {
      id: 1,
      label: "R-0001",
      state: "draft",
      verdict: null,
      tableId: 1,
      tankId: 2,
      cameraId: 3,
      setRateRpm: 10,
      direction: "ccw",
      waterDepthM: 0.12,
      waterTemperatureC: 20,
      rateReachedAt: null,
      cameraMode: "rotating",
      frameRateFps: 30,
      tracer: "float",
      purpose: "A run",
      notes: null,
      technicianId: 4,
      supersedesId: null,
      signedOffById: null,
      signedOffAt: null,
      frameCount: 0,
      createdAt: "2026-03-14T09:00:00.000Z",
      updatedAt: "2026-03-14T09:00:00.000Z",
    };
    const answer = (json: unknown, status = 200) => ({ status, contentType: "application/json", json });
    expect(contractProblems("PATCH", "/api/v1/runs/1", answer(run))).toEqual([]);
    expect(contractProblems("PATCH", "/api/v1/runs/1", answer({ ...run, secretNote: "x" }))).toEqual([
      expect.stringMatching(/PATCH \/api\/v1\/runs\/\{id\} → 200: \(body\) must NOT have additional properties \(secretNote\)/),
    ]);
    const withoutPurpose = Object.fromEntries(Object.entries(run).filter(([key]) => key !== "purpose"));
    expect(contractProblems("PATCH", "/api/v1/runs/1", answer(withoutPurpose)).join()).toMatch(/must have required property 'purpose'/);
    expect(contractProblems("PATCH", "/api/v1/runs/1", answer({ error: { code: "x", message: "y" } }, 418)).join()).toMatch(/status 418 is not documented/);
    expect(contractProblems("GET", "/api/v1/runs/1", answer({ error: { code: "not_found", message: "No.", detail: 1 } }, 404)).join()).toMatch(
      /additional properties \(detail\)/,
    );
  });

  it("is OpenAPI 3.1 with bearer-token and cookie security", () => {
    expect(doc.openapi).toBe("3.1.0");
    expect(Object.keys(doc.components.securitySchemes).sort()).toEqual(["bearerToken", "sessionCookie"]);
    expect(doc.components.securitySchemes.bearerToken).toMatchObject({ type: "http", scheme: "bearer" });
  });

  it("describes every API route in app/routes.ts, and nothing that is not routed", () => {
    const routed = [...apiRoutes().keys()].sort();
    const described = Object.keys(doc.paths).sort();
    expect(
      described.filter((p) => !routed.includes(p)),
      "documented but not routed",
    ).toEqual([]);
    expect(
      routed.filter((p) => !described.includes(p)),
      "routed but not documented",
    ).toEqual([]);
  });

  it("documents GET only where the module has a loader, other methods only where it has an action", async () => {
    for (const [p, file] of apiRoutes()) {
      const item = doc.paths[p];
      if (!item) continue;
      const mod = (await import(path.join(root, "app", file))) as { loader?: unknown; action?: unknown };
      for (const method of methods) {
        if (!item[method]) continue;
        expect(typeof (method === "get" ? mod.loader : mod.action), `${method.toUpperCase()} ${p} in ${file}`).toBe("function");
      }
      const mutating = methods.some((m) => m !== "get" && item[m]);
      if (typeof mod.action === "function" && p.startsWith("/api/v1/runs")) expect(mutating, `${p} has an action but no documented write method`).toBe(true);
    }
  });

  it("gives GET /api/v1/runs exactly the query parameters the filter schema accepts, with its enums", () => {
    const params = doc.paths["/api/v1/runs"]?.get?.parameters ?? [];
    expect(params.map((p) => p.name).sort()).toEqual([...runFilterKeys].sort());
    expect(params.find((p) => p.name === "sort")?.schema.enum).toEqual([...runSortFields]);
    // Every documented parameter is accepted on its own by the parser the route uses, and a made-up one is not.
    for (const p of params) {
      const sample = p.schema.enum?.[0] ?? { table: "1", technician: "1", from: "2025-01-01", to: "2025-01-02", q: "dye", page: "1", pageSize: "25" }[p.name];
      expect(parseRunFilters(new URLSearchParams({ [p.name]: String(sample) })).ok, p.name).toBe(true);
    }
    expect(parseRunFilters(new URLSearchParams({ undocumented: "1" })).ok).toBe(false);
  });

  it("has request examples that the routes' own zod schemas accept, and bodies generated from them", () => {
    const post = doc.paths["/api/v1/runs"]?.post?.requestBody?.content["application/json"];
    const patch = doc.paths["/api/v1/runs/{id}"]?.patch?.requestBody?.content["application/json"];
    expect(post?.example).toEqual(runCreateExample);
    expect(post?.schema).toEqual({ $ref: "#/components/schemas/RunCreate" });
    expect(runApiCreateSchema.safeParse(runCreateExample).success).toBe(true);
    expect(runApiPatchSchema.safeParse(patch?.example).success).toBe(true);
    expect(patch?.example).toEqual(runPatchExample);
    const body = doc.components.schemas.RunCreate;
    if (!body) throw new Error("no RunCreate schema");
    expect(body.additionalProperties).toBe(false);
    expect(Object.keys(body.properties).sort()).toEqual(Object.keys(runApiCreateSchema.shape).sort());
    expect(body.required).toContain("purpose");
  });

  it("is served at /api/v1/openapi.json without signing in", async () => {
    const { loader } = await import("~/routes/api/openapi");
    const res = loader();
    expect(res.status).toBe(200);
    expect((await res.json()).paths["/api/v1/runs/{id}/tracks.csv"].get.responses["409"]).toBeDefined();
  });
});

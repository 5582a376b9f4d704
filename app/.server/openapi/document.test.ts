import fs from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { buildOpenApiDocument } from "./document";
import { runCreateExample, runPatchExample } from "./schemas";
import { runApiCreateSchema, runApiPatchSchema } from "~/lib/validation/run-api";
import { parseRunFilters, runFilterKeys, runSortFields } from "~/lib/validation/run-filters";

const root = path.resolve(import.meta.dirname, "../../..");
const doc = buildOpenApiDocument();
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
  it("is OpenAPI 3.1 with bearer-token and cookie security", () => {
    expect(doc.openapi).toBe("3.1.0");
    expect(Object.keys(doc.components.securitySchemes).sort()).toEqual(["bearerToken", "sessionCookie"]);
    expect(doc.components.securitySchemes.bearerToken).toMatchObject({ type: "http", scheme: "bearer" });
  });

  it("describes every API route in app/routes.ts, and nothing that is not routed", () => {
    const routed = [...apiRoutes().keys()].sort();
    const described = Object.keys(doc.paths).sort();
    expect(described.filter((p) => !routed.includes(p)), "documented but not routed").toEqual([]);
    expect(routed.filter((p) => !described.includes(p)), "routed but not documented").toEqual([]);
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
    const params = doc.paths["/api/v1/runs"]!.get!.parameters as { name: string; schema: { enum?: string[] } }[];
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
    const post = doc.paths["/api/v1/runs"]!.post as { requestBody: { content: { "application/json": { example: unknown } } } };
    const patch = doc.paths["/api/v1/runs/{id}"]!.patch as { requestBody: { content: { "application/json": { example: unknown } } } };
    expect(post.requestBody.content["application/json"].example).toEqual(runCreateExample);
    expect(runApiCreateSchema.safeParse(runCreateExample).success).toBe(true);
    expect(runApiPatchSchema.safeParse(patch.requestBody.content["application/json"].example).success).toBe(true);
    expect(patch.requestBody.content["application/json"].example).toEqual(runPatchExample);
    const body = doc.components.schemas.RunCreate as { required: string[]; properties: Record<string, unknown> };
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

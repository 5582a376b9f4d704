/**
 * The other doors to a route say the same as the policy table: the navigation shows a section to
 * exactly the roles that may open it, and the OpenAPI document's `x-roles` name exactly the roles
 * the API lets through. (The matrix checks what the routes do; this checks what they are said to do.)
 */
import { beforeAll, describe, expect, it } from "vitest";
import { buildOpenApiDocument } from "~/.server/openapi/document";
import { sections } from "~/lib/roles";
import { routedModules, type RoutedModule } from "./harness";
import { policy } from "./policy";

let routes: RoutedModule[];
beforeAll(async () => {
  routes = await routedModules();
});

const rolesOf = (access: unknown) => (access === "public" ? "public" : [...((access as string[] | undefined) ?? [])].sort());

describe("navigation, OpenAPI document and policy agree", () => {
  it("shows each section of the navigation to exactly the roles its page lets in", () => {
    for (const section of sections) {
      const route = routes.find((r) => r.pattern === section.to && !r.isApi);
      expect(route, section.to).toBeDefined();
      expect([...section.roles].sort(), `${section.key} (${section.to})`).toEqual(rolesOf(policy[route!.id]?.GET));
    }
  });

  it("names in x-roles exactly the roles the policy lets through, for every operation that has them", () => {
    const doc = buildOpenApiDocument() as unknown as { paths: Record<string, Record<string, { "x-roles"?: readonly string[] }>> };
    let checked = 0;
    for (const [p, item] of Object.entries(doc.paths)) {
      const route = routes.find((r) => r.pattern === p.replace(/\{(\w+)\}/g, ":$1"));
      expect(route, p).toBeDefined();
      for (const [method, op] of Object.entries(item)) {
        if (!op["x-roles"]) continue;
        checked++;
        expect([...op["x-roles"]].sort(), `${method.toUpperCase()} ${p}`).toEqual(rolesOf(policy[route!.id]?.[method.toUpperCase() as "GET"]));
      }
    }
    // The calibration operations carry x-roles: list, read, record, replace, sign off, attach, download.
    expect(checked).toBeGreaterThanOrEqual(7);
  });
});

/**
 * Role × route: every route in app/routes.ts, every method it serves, as nobody and as each role by
 * session cookie and by API token, against the one policy table in policy.ts (OWASP ASVS 4.0.3
 * V4.1.3, least privilege; V4.1.5, access controls fail securely).
 */
import { beforeAll, describe, expect, it } from "vitest";
import { buildRequest, callRoute, fillPattern, identitiesFor, isApiError, routedModules, type Identity, type RoutedModule } from "./harness";
import { attackLab, paramsFor, type AttackLab } from "./fixtures";
import { expectationFor, policy } from "./policy";

let lab: AttackLab;
let routes: RoutedModule[];
let identities: Identity[];

beforeAll(async () => {
  lab = await attackLab();
  routes = await routedModules();
  identities = await identitiesFor(lab.people);
});

describe("the policy table covers app/routes.ts", () => {
  it("has a row for every route, and no row for a route that is gone", () => {
    const ids = routes.map((r) => r.id);
    expect(
      ids.filter((id) => !(id in policy)),
      "routes without a policy row in tests/attack/policy.ts",
    ).toEqual([]);
    expect(
      Object.keys(policy).filter((id) => !ids.includes(id)),
      "policy rows naming no route",
    ).toEqual([]);
  });

  it("lists only methods the route really serves", () => {
    for (const r of routes) {
      const listed = Object.keys(policy[r.id] ?? {});
      expect(
        listed.filter((m) => !r.methods.includes(m as never)),
        `${r.id} (${r.pattern})`,
      ).toEqual([]);
    }
  });
});

describe("every route × method × person gets what the policy says", () => {
  it("passes the allowed, sends nobody to sign in (pages) or 401 (API), 403s other roles, refuses unlisted methods", async () => {
    const problems: string[] = [];
    let requests = 0;
    for (const route of routes) {
      for (const method of route.methods) {
        for (const who of identities) {
          const params = paramsFor(route.pattern, lab, who.role);
          const url = fillPattern(route.pattern, params);
          const want = expectationFor(policy[route.id]?.[method], who, route.isApi);
          const body = method === "GET" ? null : route.isApi ? "{}" : new URLSearchParams();
          const headers: Record<string, string> = method !== "GET" && route.isApi ? { "Content-Type": "application/json" } : {};
          const got = await callRoute(route, await buildRequest(who, { method, url, headers, body }), params);
          requests++;
          const toSignIn = got.status >= 300 && got.status < 400 && (got.location ?? "").startsWith("/sign-in");
          const where = `${method} ${url} (${route.id}) as ${who.label}: expected ${want}, got ${got.status}${got.location ? ` → ${got.location}` : ""}`;
          if (got.crash) {
            problems.push(`${where} — threw ${String(got.crash)}`);
            continue;
          }
          const ok =
            want === "public"
              ? got.status < 500 && got.status !== 401 && got.status !== 403
              : want === "pass"
                ? got.status < 500 && got.status !== 401 && got.status !== 403 && !toSignIn
                : want === "sign-in"
                  ? toSignIn
                  : want === "401"
                    ? got.status === 401 && isApiError(got.json)
                    : want === "403"
                      ? got.status === 403 && (!route.isApi || isApiError(got.json))
                      : [401, 403, 405].includes(got.status) || toSignIn;
          if (!ok) problems.push(where);
        }
      }
    }
    expect(problems).toEqual([]);
    // 56 routes in app/routes.ts when this was written; a shrinking count means routes went missing.
    expect(requests).toBeGreaterThan(500);
    console.info(`[attack] access matrix: ${requests} requests`);
  });
});

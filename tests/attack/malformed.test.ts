/**
 * Malformed requests (malformed-cases.ts) against the real route modules: each must get a 4xx that
 * says what is wrong — the API's JSON error, a page-level 4xx — never a 500, and must change no
 * stored row (OWASP ASVS 4.0.3 V5.1.3 input validation, V7.4.1 generic error handling; RFC 9110
 * §15.5 for the statuses).
 */
import { beforeAll, describe, expect, it } from "vitest";
import {
  buildRequest,
  callRoute,
  dataFingerprint,
  fillPattern,
  identitiesFor,
  isApiError,
  routedModules,
  type Identity,
  type Outcome,
  type RoutedModule,
  type Send,
} from "./harness";
import { attackLab, paramsFor, type AttackLab } from "./fixtures";
import { policy } from "./policy";
import {
  actsWithoutInput,
  apiActsWithoutBody,
  badIds,
  bodyCases,
  dateCases,
  dayCases,
  formCases,
  jsonTargets,
  numberCases,
  queryTargets,
  textCases,
} from "./malformed-cases";

let lab: AttackLab;
let routes: RoutedModule[];
let manager: { cookie: Identity; token: Identity };

beforeAll(async () => {
  lab = await attackLab();
  routes = await routedModules();
  const ids = await identitiesFor(lab.people);
  manager = { cookie: ids.find((i) => i.label === "lab_manager by cookie")!, token: ids.find((i) => i.label === "lab_manager by token")! };
});

const routeFor = (path: string) => {
  const found = routes.find((r) => new RegExp(`^${r.pattern.replace(/:\w+/g, "[^/]+")}$`).test(path) && !r.pattern.endsWith("*"));
  if (!found) throw new Error(`no route serves ${path}`);
  return found;
};
const paramsOf = (route: RoutedModule, path: string) => {
  const names = [...route.pattern.matchAll(/:(\w+)/g)].map((m) => m[1]!);
  const values = new RegExp(`^${route.pattern.replace(/:\w+/g, "([^/]+)")}$`).exec(path)!.slice(1);
  return Object.fromEntries(names.map((n, i) => [n, decodeURIComponent(values[i]!)]));
};

/**
 * The data as the last look left it. Nothing but these requests writes between two of them, so the
 * look after one request is the look before the next, and each request costs one look, not two.
 */
let lastLook: Record<string, string | number> | null = null;

/** Sends one request and collects what is wrong with the answer, data changes included. */
async function attack(label: string, route: RoutedModule, send: Send, params: Record<string, string>, problems: string[], okWhen?: (o: Outcome) => boolean) {
  const before = lastLook ?? (await dataFingerprint());
  const got = await callRoute(route, await buildRequest(route.isApi ? manager.token : manager.cookie, send), params);
  const after = await dataFingerprint();
  lastLook = after;
  const where = `${label}: ${send.method} ${send.url.slice(0, 80)} → ${got.status}`;
  if (got.crash) problems.push(`${where} threw ${String(got.crash).slice(0, 200)}`);
  else if (okWhen ? !okWhen(got) : got.status < 400 || got.status >= 500) problems.push(`${where}, wanted a 4xx ${JSON.stringify(got.json)?.slice(0, 160)}`);
  else if (route.isApi && !okWhen && !isApiError(got.json)) problems.push(`${where} without the JSON error shape`);
  const changed = Object.keys(after).filter((t) => after[t] !== before[t]);
  if (changed.length) problems.push(`${where} changed ${changed.join(", ")}`);
}

const counts: Record<string, number> = {};
const report = (part: string, n: number) => {
  counts[part] = n;
  console.info(`[attack] ${part}: ${n} requests`);
};

// Each request is followed by a look at every table, so these take a while on a shared machine.
describe("malformed requests get a 4xx, never a 500, and change nothing", { timeout: 300_000 }, () => {
  it("JSON bodies: broken, the wrong shape, the wrong type, out of range or over-long", async () => {
    const problems: string[] = [];
    let n = 0;
    for (const t of jsonTargets) {
      const url = t.url(lab);
      const route = routeFor(url);
      const params = paramsOf(route, url);
      const valid = t.valid(lab);
      const sendJson = (text: string | null, type: string | null): Send => ({
        method: t.method,
        url,
        headers: type ? { "Content-Type": type } : {},
        body: text,
      });
      for (const c of bodyCases) {
        await attack(`${t.name}, ${c.name}`, route, sendJson(c.body(valid), c.type), params, problems);
        n++;
      }
      const withField = (field: string, json: string) => {
        const base = JSON.stringify({ ...valid, [field]: "__value__" });
        return base.replace('"__value__"', json);
      };
      const fieldCases: [string[], { name: string; json: string }[]][] = [
        [t.numbers, numberCases],
        [t.texts, textCases],
        [t.dates, dateCases],
        [t.days ?? [], dayCases],
      ];
      for (const [fields, cases] of fieldCases) {
        for (const field of fields) {
          for (const c of cases) {
            await attack(`${t.name}, ${field} = ${c.name}`, route, sendJson(withField(field, c.json), "application/json"), params, problems);
            n++;
          }
        }
      }
      for (const field of t.required) {
        const { [field]: _left, ...rest } = valid;
        await attack(`${t.name}, without ${field}`, route, sendJson(JSON.stringify(rest), "application/json"), params, problems);
        n++;
      }
    }
    report("JSON bodies", n);
    expect(problems).toEqual([]);
  });

  it("ids that name nothing, on every route with a parameter and every method the policy lets a lab manager use", async () => {
    const problems: string[] = [];
    let n = 0;
    for (const route of routes.filter((r) => r.pattern.includes(":"))) {
      const good = paramsFor(route.pattern, lab, "lab_manager");
      for (const name of Object.keys(good)) {
        if (name === "token") continue; // a secret, not an id: any text is a secret that matches nothing
        for (const bad of badIds) {
          const params = { ...good, [name]: bad };
          for (const method of route.methods.filter((m) => policy[route.id]?.[m] !== undefined)) {
            const body = method === "GET" ? null : route.isApi ? "{}" : new URLSearchParams({ intent: "sign-off", confirm: "yes" });
            const headers: Record<string, string> = method === "GET" ? {} : route.isApi ? { "Content-Type": "application/json" } : {};
            await attack(
              `${route.id} with ${name} = ${JSON.stringify(bad)}`,
              route,
              { method, url: fillPattern(route.pattern, params), headers, body },
              params,
              problems,
            );
            n++;
          }
        }
      }
    }
    report("ids", n);
    expect(problems).toEqual([]);
  });

  it("filters in the query: NUL bytes, 1 MB of text, impossible dates, numbers that are not", async () => {
    const problems: string[] = [];
    let n = 0;
    for (const t of queryTargets) {
      const route = routeFor(t.path);
      for (const q of t.queries) {
        await attack(`${t.name} ?${q.slice(0, 40)}`, route, { method: "GET", url: `${t.path}?${q}` }, {}, problems);
        n++;
      }
    }
    report("query filters", n);
    expect(problems).toEqual([]);
  });

  it("every action: a POST with no body, or a body that is not a readable form (pages) or JSON (API)", async () => {
    const problems: string[] = [];
    let n = 0;
    for (const route of routes.filter((r) => r.action && policy[r.id]?.POST !== undefined)) {
      const params = paramsFor(route.pattern, lab, "lab_manager");
      const url = fillPattern(route.pattern, params);
      if (route.isApi) {
        if (apiActsWithoutBody.has(route.id)) continue;
        for (const c of formCases) {
          await attack(
            `${route.id}, ${c.name}`,
            route,
            { method: "POST", url, headers: c.type ? { "Content-Type": c.type } : {}, body: c.body },
            params,
            problems,
          );
          n++;
        }
        continue;
      }
      for (const c of formCases) {
        const okWhen = actsWithoutInput.has(route.id) ? (o: Outcome) => o.status >= 300 && o.status < 400 : undefined;
        await attack(
          `${route.id}, ${c.name}`,
          route,
          { method: "POST", url, headers: c.type ? { "Content-Type": c.type } : {}, body: c.body },
          params,
          problems,
          okWhen,
        );
        n++;
      }
    }
    report("action bodies", n);
    expect(problems).toEqual([]);
  });

  it("accepts each JSON target's valid body as it stands, so every case above broke one thing only", async () => {
    lastLook = null; // these requests write, so a request after them must look afresh
    for (const t of jsonTargets) {
      const url = t.url(lab);
      const route = routeFor(url);
      const got = await callRoute(
        route,
        await buildRequest(manager.token, { method: t.method, url, headers: { "Content-Type": "application/json" }, body: JSON.stringify(t.valid(lab)) }),
        paramsOf(route, url),
      );
      expect(got.status, `${t.name}: ${JSON.stringify(got.json)?.slice(0, 300)}`).toBeLessThan(300);
    }
    const total = Object.values(counts).reduce((a, b) => a + b, 0);
    console.info(`[attack] malformed requests in all: ${total}`);
    expect(total).toBeGreaterThanOrEqual(200);
  });
});

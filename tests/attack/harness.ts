/**
 * The attack suite's machinery: the routes as app/routes.ts registers them, people of each role
 * with a fresh session cookie or an API token, calling a route module in-process the way React
 * Router would, and a fingerprint of the stored data to prove a refused request changed nothing.
 */
import crypto from "node:crypto";
import path from "node:path";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import { isRouteErrorResponse } from "react-router";
import routeConfig from "~/routes";
import { sequelize } from "~/.server/db";
import { sessionStorage } from "~/.server/auth/session";
import { createApiToken } from "~/.server/auth/api-tokens";
import type { Role } from "~/lib/roles";
import { assertDocumented } from "../support/api-contract";
// @ts-expect-error plain ESM module of the server, without type declarations
import { methodsServed } from "../../server-guards.mjs";

const appDir = path.resolve(import.meta.dirname, "../../app");

export type Method = "GET" | "POST" | "PUT" | "PATCH" | "DELETE";

export interface RoutedModule {
  /** React Router's route id: the `id` option, else the file without its extension. */
  id: string;
  /** The URL pattern, e.g. `/api/v1/runs/:id`. */
  pattern: string;
  file: string;
  isApi: boolean;
  loader?: Handler;
  action?: Handler;
  /** GET where there is a loader; the write methods the server lets through to this path where there is an action. */
  methods: Method[];
}

type Handler = (args: { request: Request; params: Record<string, string>; context: unknown }) => unknown;

function flatten(entries: RouteConfigEntry[], parent = ""): { id: string; pattern: string; file: string }[] {
  return entries.flatMap((e) => {
    const pattern = `${parent}/${e.path ?? ""}`.replace(/\/+/g, "/").replace(/(.)\/$/, "$1");
    const id = e.id ?? e.file.replace(/\.[tj]sx?$/, "");
    return [{ id, pattern, file: e.file }, ...flatten(e.children ?? [], pattern)];
  });
}

/** Every route in app/routes.ts with its module loaded. */
export async function routedModules(): Promise<RoutedModule[]> {
  const out: RoutedModule[] = [];
  for (const r of flatten(routeConfig)) {
    const mod = (await import(/* @vite-ignore */ path.join(appDir, r.file))) as { loader?: Handler; action?: Handler };
    const isApi = r.pattern.startsWith("/api/");
    const served = methodsServed(r.pattern) as string[];
    const methods: Method[] = [];
    if (mod.loader) methods.push("GET");
    if (mod.action) methods.push(...(["POST", "PUT", "PATCH", "DELETE"] as const).filter((m) => served.includes(m)));
    out.push({ ...r, isApi, loader: mod.loader, action: mod.action, methods });
  }
  return out;
}

/** Fills a route pattern's parameters: `/runs/:id` with { id: "7" } → `/runs/7`. */
export function fillPattern(pattern: string, params: Record<string, string>) {
  return pattern.replace(/:(\w+)/g, (_, name: string) => encodeURIComponent(params[name] ?? `missing-${name}`)).replace(/\*$/, "no-such-thing");
}

export type Identity = { label: string; role: Role | null; by: "anonymous" | "cookie" | "token"; userId?: number; token?: string };

export async function identitiesFor(people: Record<Role, { id: number }>): Promise<Identity[]> {
  const ids: Identity[] = [{ label: "anonymous", role: null, by: "anonymous" }];
  for (const role of Object.keys(people) as Role[]) {
    ids.push({ label: `${role} by cookie`, role, by: "cookie", userId: people[role].id });
    ids.push({ label: `${role} by token`, role, by: "token", userId: people[role].id, token: (await createApiToken(people[role].id, "attack suite")).token });
  }
  return ids;
}

/** A fresh session per request: a sign-out in one request cannot end the next one's session. */
async function cookieFor(userId: number) {
  const session = await sessionStorage.getSession();
  session.set("userId", userId);
  return (await sessionStorage.commitSession(session)).split(";")[0]!;
}

export interface Send {
  method: string; // a Method, or any other verb the attack tries
  url: string;
  headers?: Record<string, string>;
  body?: BodyInit | null;
}

export async function buildRequest(who: Identity, send: Send) {
  const headers = new Headers(send.headers);
  if (who.by === "cookie") headers.set("Cookie", await cookieFor(who.userId!));
  if (who.by === "token") headers.set("Authorization", `Bearer ${who.token}`);
  return new Request(new URL(send.url, "http://localhost"), { method: send.method, headers, body: send.body ?? null, duplex: "half" } as RequestInit);
}

export interface Outcome {
  status: number;
  location: string | null;
  /** The JSON body when there is one. */
  json: unknown;
  /** Something other than a Response (or React Router's data()) escaped: the server would answer 500. */
  crash: unknown;
}

/** Calls a loader or action as React Router does and reads the answer, thrown or returned. */
export async function callRoute(route: RoutedModule, request: Request, params: Record<string, string>): Promise<Outcome> {
  const handler = request.method === "GET" || request.method === "HEAD" ? route.loader : route.action;
  if (!handler) return { status: 405, location: null, json: null, crash: null };
  let answer: unknown;
  try {
    answer = await handler({ request, params, context: { cspNonce: "attack", clientAddress: "192.0.2.1" } });
  } catch (thrown) {
    answer = thrown;
  }
  if (answer instanceof Response) {
    const text = await answer.text();
    let json: unknown = null;
    try {
      json = text ? JSON.parse(text) : null;
    } catch {
      json = null;
    }
    // Every API answer the suite receives is checked against the OpenAPI document: its status must be documented for the operation and its body must match.
    if (route.isApi) assertDocumented(request.method, request.url, { status: answer.status, contentType: answer.headers.get("Content-Type"), json });
    return { status: answer.status, location: answer.headers.get("Location"), json, crash: null };
  }
  // data(value, { status }) thrown or returned
  if (answer && typeof answer === "object" && (answer as { type?: string }).type === "DataWithResponseInit") {
    const d = answer as unknown as { data: unknown; init: { status?: number; headers?: HeadersInit } | null };
    return { status: d.init?.status ?? 200, location: new Headers(d.init?.headers).get("Location"), json: d.data, crash: null };
  }
  if (isRouteErrorResponse(answer)) return { status: answer.status, location: null, json: answer.data, crash: null };
  if (answer instanceof Error) return { status: 500, location: null, json: null, crash: answer };
  // A plain object returned from a loader or action is a 200.
  return { status: 200, location: null, json: answer, crash: null };
}

/** Is this the API's error shape, {"error":{"code","message"}}? */
export function isApiError(json: unknown) {
  const e = (json as { error?: { code?: unknown; message?: unknown } } | null)?.error;
  return typeof e?.code === "string" && typeof e.message === "string" && e.message.length > 0;
}

/** Tables whose rows a refused request may still touch: sessions (each request gets a fresh one) and token last-use times. */
const volatile = new Set(["sessions", "api_tokens", "SequelizeMeta"]);

/** Row count and a hash of the contents of every table (a table added later is covered too), on either database. */
export async function dataFingerprint() {
  const tables = await sequelize.getQueryInterface().showAllTables();
  const out: Record<string, string | number> = {};
  for (const table of tables.filter((t) => !volatile.has(t)).sort()) {
    const [all] = await sequelize.query(`SELECT * FROM "${table}"`);
    // Sorted as text, so neither database's row order matters.
    const rows = all.map((r) => JSON.stringify(r)).sort();
    out[table] = `${rows.length} rows, ${crypto.createHash("sha256").update(rows.join("\n")).digest("hex").slice(0, 16)}`;
  }
  return out;
}

import { afterEach, describe, expect, it } from "vitest";
// @ts-expect-error plain ESM module of the server, without type declarations
import { loadContext, noStore, sameOriginOnly, servedMethodsOnly, strictTransport } from "../../server-guards.mjs";

interface Fake {
  status: number;
  headers: Record<string, string>;
  body: unknown;
  passed: boolean;
}

function run(
  mw: (req: unknown, res: unknown, next: () => void) => void,
  opts: { method?: string; path?: string; headers?: Record<string, string>; ip?: string },
) {
  const headers = Object.fromEntries(Object.entries({ host: "lab.tankside.example", ...opts.headers }).map(([k, v]) => [k.toLowerCase(), v]));
  const out: Fake = { status: 200, headers: {}, body: undefined, passed: false };
  const req = {
    method: opts.method ?? "POST",
    path: opts.path ?? "/runs/new",
    protocol: "http",
    ip: opts.ip,
    socket: { remoteAddress: "10.9.9.9" },
    get: (n: string) => headers[n.toLowerCase()],
  };
  const res = {
    locals: { cspNonce: "n0nce" },
    status(code: number) {
      out.status = code;
      return res;
    },
    type() {
      return res;
    },
    json(b: unknown) {
      out.body = b;
      return res;
    },
    send(b: unknown) {
      out.body = b;
      return res;
    },
    setHeader(k: string, v: string) {
      out.headers[k.toLowerCase()] = v;
    },
  };
  mw(req, res, () => {
    out.passed = true;
  });
  return { out, req, res };
}

describe("sameOriginOnly", () => {
  it("refuses a POST without Origin whose Referer is another site", () => {
    const { out } = run(sameOriginOnly, { headers: { referer: "https://evil.example/page" } });
    expect(out.passed).toBe(false);
    expect(out.status).toBe(403);
  });
  it("refuses a POST with a foreign Origin, and an API POST with a foreign Referer gets JSON", () => {
    expect(run(sameOriginOnly, { headers: { origin: "https://evil.example" } }).out.status).toBe(403);
    const api = run(sameOriginOnly, { path: "/api/v1/runs", headers: { referer: "https://evil.example/" } }).out;
    expect(api.status).toBe(403);
    expect(api.body).toMatchObject({ error: { code: "cross_origin" } });
  });
  it("refuses a Referer that is not a URL", () => {
    expect(run(sameOriginOnly, { headers: { referer: "not a url" } }).out.passed).toBe(false);
  });
  it("accepts its own Origin, its own Referer, neither header, and safe methods", () => {
    expect(run(sameOriginOnly, { headers: { origin: "http://lab.tankside.example" } }).out.passed).toBe(true);
    expect(run(sameOriginOnly, { headers: { referer: "http://lab.tankside.example/runs/new" } }).out.passed).toBe(true);
    expect(run(sameOriginOnly, {}).out.passed).toBe(true);
    expect(run(sameOriginOnly, { method: "GET", headers: { referer: "https://evil.example/" } }).out.passed).toBe(true);
  });
  it("lets a bearer-token API call through (it carries no cookie) but not a page POST with one", () => {
    expect(run(sameOriginOnly, { path: "/api/v1/runs", headers: { authorization: "Bearer tks_x", origin: "https://script.example" } }).out.passed).toBe(true);
    expect(run(sameOriginOnly, { path: "/account", headers: { authorization: "Bearer tks_x", origin: "https://evil.example" } }).out.passed).toBe(false);
  });
});

describe("servedMethodsOnly", () => {
  it("answers TRACE, CONNECT, OPTIONS and made-up methods with 405 and an Allow header, JSON under /api/", () => {
    for (const method of ["TRACE", "CONNECT", "OPTIONS", "PROPFIND", "BREW"]) {
      const page = run(servedMethodsOnly, { method, path: "/" }).out;
      expect(page.passed, method).toBe(false);
      expect(page.status, method).toBe(405);
      expect(page.headers.allow).toBe("GET, HEAD, POST");
      const api = run(servedMethodsOnly, { method, path: "/api/v1/runs" }).out;
      expect(api.status, method).toBe(405);
      expect(api.headers.allow).toBe("GET, HEAD, POST, PUT, PATCH, DELETE");
      expect(api.body).toMatchObject({ error: { code: "method_not_allowed", message: expect.stringContaining(method) } });
    }
  });
  it("keeps PUT, PATCH and DELETE to the API and refuses them on pages, which only take form POSTs", () => {
    for (const method of ["PUT", "PATCH", "DELETE"]) {
      expect(run(servedMethodsOnly, { method, path: "/api/v1/runs/1" }).out.passed, method).toBe(true);
      expect(run(servedMethodsOnly, { method, path: "/settings" }).out.status, method).toBe(405);
    }
    for (const method of ["GET", "HEAD", "POST"]) {
      expect(run(servedMethodsOnly, { method, path: "/settings" }).out.passed, method).toBe(true);
    }
  });
});

describe("transport and caching headers", () => {
  const before = process.env.COOKIE_SECURE;
  afterEach(() => {
    if (before === undefined) delete process.env.COOKIE_SECURE;
    else process.env.COOKIE_SECURE = before;
  });
  it("sends HSTS for a year with subdomains only under COOKIE_SECURE=1", () => {
    process.env.COOKIE_SECURE = "1";
    expect(run(strictTransport, { method: "GET" }).out.headers["strict-transport-security"]).toBe("max-age=31536000; includeSubDomains");
    delete process.env.COOKIE_SECURE;
    expect(run(strictTransport, { method: "GET" }).out.headers["strict-transport-security"]).toBeUndefined();
  });
  it("marks app responses no-store", () => {
    expect(run(noStore, { method: "GET" }).out.headers["cache-control"]).toBe("no-store");
  });
  it("passes the client's address (req.ip, which honours TRUST_PROXY) to the app", () => {
    const { req, res } = run(noStore, { method: "GET", ip: "192.0.2.7", headers: { "x-forwarded-for": "203.0.113.1" } });
    expect(loadContext(req, res)).toEqual({ cspNonce: "n0nce", clientAddress: "192.0.2.7" });
  });
});

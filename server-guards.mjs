// Request guards of Tankside's HTTP server, apart from server.mjs so they can be tested alone.

const safeMethods = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * The methods Tankside answers at a path: pages take GET and form POSTs; the JSON API also takes
 * PUT, PATCH and DELETE. Anything else (TRACE, CONNECT, OPTIONS, made-up verbs) never reaches the
 * app — an action would otherwise treat it as a form submission.
 */
export function methodsServed(path) {
  return path.startsWith("/api/") ? ["GET", "HEAD", "POST", "PUT", "PATCH", "DELETE"] : ["GET", "HEAD", "POST"];
}

/** 405 with an Allow header for a method the path does not serve (RFC 9110 §15.5.6). */
export function servedMethodsOnly(req, res, next) {
  const allowed = methodsServed(req.path);
  if (allowed.includes(req.method)) return next();
  res.setHeader("Allow", allowed.join(", "));
  const message = `${req.method} is not served here; use ${allowed.join(", ")}.`;
  if (req.path.startsWith("/api/") || (req.get("accept") ?? "").includes("json")) {
    return res.status(405).json({ error: { code: "method_not_allowed", message } });
  }
  res.status(405).type("text/plain").send(message);
}

function originOf(value) {
  try {
    return new URL(value).origin;
  } catch {
    return null;
  }
}

/**
 * Every state-changing request from a browser must come from Tankside's own pages. Origin decides
 * when present; without it a Referer from another site refuses too. API calls with a bearer token
 * are exempt: they carry no cookie, so another site cannot make a browser send them.
 */
export function sameOriginOnly(req, res, next) {
  if (safeMethods.has(req.method)) return next();
  if (req.path.startsWith("/api/") && /^Bearer\s/i.test(req.get("authorization") ?? "")) return next();
  const own = `${req.protocol}://${req.get("host")}`;
  const configured = process.env.APP_URL ? originOf(process.env.APP_URL) : null;
  const ours = (o) => o === own || (configured !== null && o === configured);
  const origin = req.get("origin");
  const referer = req.get("referer");
  const fetchSite = req.get("sec-fetch-site");
  let originOk;
  if (origin) originOk = ours(origin);
  else if (referer) originOk = ours(originOf(referer));
  else originOk = true;
  const siteOk = !fetchSite || fetchSite === "same-origin" || fetchSite === "none";
  if (originOk && siteOk) return next();
  const message = "This request came from another site and was refused.";
  if (req.path.startsWith("/api/") || (req.get("accept") ?? "").includes("json")) {
    return res.status(403).json({ error: { code: "cross_origin", message } });
  }
  res.status(403).type("text/plain").send(message);
}

/** HSTS when the site runs behind HTTPS (COOKIE_SECURE=1): a year, subdomains included. */
export function strictTransport(req, res, next) {
  if (process.env.COOKIE_SECURE === "1") res.setHeader("Strict-Transport-Security", "max-age=31536000; includeSubDomains");
  next();
}

/**
 * Mounted after the static files: every page, export and API answer may carry personal data, so
 * none is kept by the browser or a proxy.
 */
export function noStore(req, res, next) {
  res.setHeader("Cache-Control", "no-store");
  next();
}

/** What the app sees of the request: the CSP nonce and the client's address (req.ip honours TRUST_PROXY). */
export function loadContext(req, res) {
  return { cspNonce: res.locals.cspNonce, clientAddress: req.ip ?? req.socket?.remoteAddress ?? "unknown" };
}

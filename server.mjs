// Tankside's HTTP server: security headers and the same-origin check in front of React Router.
import crypto from "node:crypto";
import http from "node:http";
import express from "express";
import compression from "compression";
import { loadContext, noStore, sameOriginOnly, servedMethodsOnly, strictTransport } from "./server-guards.mjs";
import { closeUnreadUploads, createRequestHandler, refuseOversizedBodies } from "./server-bodies.mjs";

const dev = process.argv.includes("--dev");
const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const buildDir = process.env.TANKSIDE_BUILD_DIR ?? "build";

function securityHeaders(req, res, next) {
  const nonce = crypto.randomBytes(16).toString("base64");
  res.locals.cspNonce = nonce;
  const scriptSrc = dev ? "'self' 'unsafe-inline'" : `'self' 'nonce-${nonce}'`;
  const connectSrc = dev ? "'self' ws: wss:" : "'self'";
  res.setHeader(
    "Content-Security-Policy",
    [
      "default-src 'self'",
      `script-src ${scriptSrc}`,
      // Inline style attributes come from the chart and upload components; styles still load only from here.
      "style-src 'self' 'unsafe-inline'",
      "img-src 'self' data: blob:",
      "media-src 'self' blob:",
      "font-src 'self'",
      `connect-src ${connectSrc}`,
      "worker-src 'self' blob:",
      "object-src 'none'",
      "base-uri 'self'",
      "form-action 'self'",
      "frame-ancestors 'none'",
    ].join("; "),
  );
  res.setHeader("X-Content-Type-Options", "nosniff");
  res.setHeader("Referrer-Policy", "same-origin");
  res.setHeader("X-Frame-Options", "DENY");
  res.setHeader("Cross-Origin-Opener-Policy", "same-origin");
  res.setHeader("Permissions-Policy", "camera=(), microphone=(), geolocation=()");
  next();
}

const app = express();
app.disable("x-powered-by");
if (process.env.TRUST_PROXY) app.set("trust proxy", process.env.TRUST_PROXY);
app.use(closeUnreadUploads);
app.use(compression());
app.use(securityHeaders);
app.use(strictTransport);
app.use(servedMethodsOnly);
app.use(refuseOversizedBodies);
app.use(sameOriginOnly);

// A setting that keeps Tankside from starting (an unreachable database, say) is one line, not a stack.
function refuseToStart(err) {
  if (err && err.startupProblem) {
    console.error(err.message);
    process.exit(1);
  }
  throw err;
}

let build;
try {
  if (dev) {
    const vite = await import("vite");
    const viteServer = await vite.createServer({ server: { middlewareMode: true } });
    app.use(viteServer.middlewares);
    build = () => viteServer.ssrLoadModule("virtual:react-router/server-build");
    const mod = await build();
    await mod.entry.module.boot();
  } else {
    build = await import(new URL(`./${buildDir}/server/index.js`, import.meta.url).href);
    await build.entry.module.boot();
    app.use("/assets", express.static(`${buildDir}/client/assets`, { immutable: true, maxAge: "1y" }));
    app.use(express.static(`${buildDir}/client`, { maxAge: "1h", index: false }));
  }
} catch (err) {
  refuseToStart(err);
}

app.use(noStore);
// Our own adapter instead of @react-router/express's: the app gets a body stream limited per path.
app.all(
  "/{*splat}",
  createRequestHandler({
    build,
    mode: dev ? "development" : "production",
    getLoadContext: loadContext,
  }),
);

const address = `http://${host === "0.0.0.0" ? "localhost" : host}:${port}`;
let server;
if (process.env.TANKSIDE_SOCKET_FROM_PARENT === "1" && process.send) {
  // `npm run demo` has been answering on the port ("getting ready") while this process started: it
  // hands over its listening socket, so no connection is refused between the two.
  server = http.createServer(app);
  process.on("message", (message, handle) => {
    if (message?.tankside !== "socket" || !handle) return;
    server.listen(handle, () => {
      console.log(`[tankside] serving on ${address}`);
      process.send?.({ tankside: "listening" });
    });
  });
  process.send({ tankside: "ready" });
} else {
  server = app.listen(port, host, () => console.log(`[tankside] serving on ${address}`));
}

let stopping = false;
async function stop(signal) {
  if (stopping) return;
  stopping = true;
  console.log(`[tankside] ${signal}: stopping`);
  server.close();
  try {
    const mod = typeof build === "function" ? await build() : build;
    await mod.entry.module.shutdown();
  } catch (err) {
    console.error(err);
  }
  process.exit(0);
}
process.on("SIGINT", () => stop("SIGINT"));
process.on("SIGTERM", () => stop("SIGTERM"));

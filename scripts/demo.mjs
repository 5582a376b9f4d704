// npm run demo: answers on the port at once ("getting ready", 503), builds when the sources changed
// since the last build, then starts the server, which seeds the invented lab into an empty database
// and renders and tracks the demo runs in the background. A signal to this process (Ctrl-C, or
// SIGTERM to npm, which runs this script with `exec`) stops whatever it has started.
import { spawn } from "node:child_process";
import http from "node:http";
import path from "node:path";
import { buildIsCurrent, demoSessionSecret, recordBuild, sqliteFileOf } from "./demo-support.mjs";
import { serverNodeFlags } from "./node-flags.mjs";

const root = path.resolve(import.meta.dirname, "..");
const port = Number(process.env.PORT ?? 3000);
const host = process.env.HOST ?? "127.0.0.1";
const buildDir = path.resolve(root, process.env.TANKSIDE_BUILD_DIR ?? "build");
const databaseUrl = process.env.DATABASE_URL ?? `sqlite:${path.join(root, "tankside.sqlite")}`;
const started = Date.now();
const seconds = () => ((Date.now() - started) / 1000).toFixed(1);

// The demo keeps its session secret beside its database (mode 0600, never in git), so people stay
// signed in across restarts. A real server sets SESSION_SECRET itself; production refuses to start without it.
const secretFile = `${sqliteFileOf(databaseUrl) ?? path.join(root, "tankside")}.demo-secret`;
const env = {
  ...process.env,
  TANKSIDE_DEMO: "1",
  // The server seeds an empty database, then renders and tracks the demo runs in the background.
  TANKSIDE_DEMO_SEED: "1",
  // The demo has no relay: its mail goes to the built-in fake server, shown on the mail page.
  TANKSIDE_FAKE_MAIL: "1",
  NODE_ENV: "production",
  SESSION_SECRET: process.env.SESSION_SECRET ?? demoSessionSecret(secretFile),
};

const gettingReady = `<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="refresh" content="3"><title>Tankside is getting ready</title>
<style>body{font-family:system-ui,sans-serif;max-width:36rem;margin:4rem auto;padding:0 1rem;color:#1f2933;background:#f7f9fa}h1{font-size:1.5rem}</style>
</head><body><main><h1>Tankside is getting ready</h1>
<p>The demo is building and preparing its lab. This page reloads itself every few seconds and shows Tankside as soon as it answers.</p>
</main></body></html>
`;

// Until the server takes over, every request gets 503 with Retry-After: the port answers from the first second.
const placeholder = http.createServer((req, res) => {
  res.writeHead(503, {
    "Content-Type": "text/html; charset=utf-8",
    "Retry-After": "3",
    "Cache-Control": "no-store",
    "Content-Security-Policy": "default-src 'none'; style-src 'unsafe-inline'",
    "X-Content-Type-Options": "nosniff",
    Connection: "close",
  });
  res.end(req.method === "HEAD" ? undefined : gettingReady);
});

let child = null;
let stopping = false;

function stop(signal) {
  if (stopping) {
    // A second Ctrl-C: do not wait for a graceful stop.
    if (child) killChild(child, "SIGKILL");
    return;
  }
  stopping = true;
  console.log(`[demo] ${signal}: stopping`);
  placeholder.close();
  if (child) killChild(child, signal);
  else process.exit(0);
}
for (const signal of ["SIGINT", "SIGTERM", "SIGHUP"]) process.on(signal, () => stop(signal));

/** The build runs in a process group of its own (its tools start helpers), so the whole group is signalled. */
function killChild(c, signal) {
  try {
    if (c.group) process.kill(-c.process.pid, signal);
    else c.process.kill(signal);
  } catch {
    // Already gone.
  }
}

function run(command, args) {
  return new Promise((resolve) => {
    const p = spawn(command, args, { cwd: root, env, stdio: "inherit", detached: true });
    child = { process: p, group: true };
    p.on("exit", (code, signal) => {
      child = null;
      resolve(signal ? 1 : (code ?? 1));
    });
  });
}

placeholder.on("error", (err) => {
  console.error(`[demo] cannot listen on ${host}:${port}: ${err.message}`);
  process.exit(1);
});
await new Promise((resolve) => placeholder.listen(port, host, resolve));
console.log(`[demo] http://${host === "0.0.0.0" ? "localhost" : host}:${port} answers "getting ready" until the server takes over`);

if (process.argv.includes("--no-build") || buildIsCurrent(root, buildDir)) {
  console.log("[demo] the build is current (no source changed since it was made)");
} else {
  const code = await run("npx", ["react-router", "build"]);
  if (stopping) process.exit(0);
  if (code !== 0) {
    console.error(`[demo] the build failed (exit ${code})`);
    process.exit(code);
  }
  recordBuild(root, buildDir);
  console.log(`[demo] built in ${seconds()} s`);
}

const server = spawn("node", [...serverNodeFlags, "server.mjs"], {
  cwd: root,
  env: { ...env, TANKSIDE_SOCKET_FROM_PARENT: "1" },
  stdio: ["inherit", "inherit", "inherit", "ipc"],
});
child = { process: server, group: false };
server.on("message", (message) => {
  if (message?.tankside === "ready") server.send({ tankside: "socket" }, placeholder);
  if (message?.tankside === "listening") {
    // The server accepts on the same socket now; this process stops accepting and only passes signals on.
    placeholder.close();
    console.log(`[demo] Tankside answers, ${seconds()} s after the start`);
  }
});
server.on("exit", (code, signal) => {
  placeholder.close();
  process.exit(signal ? 0 : (code ?? 0));
});

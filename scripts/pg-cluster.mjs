#!/usr/bin/env node
// A throw-away PostgreSQL cluster for the tests, made from Debian's postgresql binaries:
//   node scripts/pg-cluster.mjs start   → initdb (first time) and start; prints the URL
//   node scripts/pg-cluster.mjs stop    → stop it and remove its folder
//   node scripts/pg-cluster.mjs run -- <command…>  → start, run the command with TEST_DATABASE_URL set, stop
// The cluster lives in <tmp>/tankside-pg-<port>, listens on 127.0.0.1 only, trusts local connections
// (it is a test database on a loopback port; never use this for a real lab), and is not fsync'd.
import { spawnSync, spawn } from "node:child_process";
import fs from "node:fs";
import os from "node:os";
import path from "node:path";

const port = Number(process.env.TANKSIDE_PG_PORT ?? 54329);
// Under the system temp folder, not the checkout: the postgres user must be able to reach it, and a
// checkout under /root is closed to it.
const dir = path.join(os.tmpdir(), `tankside-pg-${port}`);
const data = path.join(dir, "data");
const url = `postgres://postgres@127.0.0.1:${port}/postgres`;

function binDir() {
  const base = "/usr/lib/postgresql";
  const versions = fs.existsSync(base)
    ? fs
        .readdirSync(base)
        .filter((v) => /^\d+$/.test(v))
        .sort((a, b) => Number(b) - Number(a))
    : [];
  for (const v of versions) if (fs.existsSync(path.join(base, v, "bin/initdb"))) return path.join(base, v, "bin");
  const which = spawnSync("sh", ["-c", "command -v initdb"], { encoding: "utf8" });
  if (which.status === 0) return path.dirname(which.stdout.trim());
  console.error("PostgreSQL is not installed: install Debian's postgresql package (apt-get install postgresql).");
  process.exit(1);
}

// PostgreSQL refuses to run as root: as root, the server runs as the postgres user Debian's package makes.
const asRoot = process.getuid?.() === 0;
function pgRun(cmd, args, opts = {}) {
  const full = asRoot ? ["runuser", ["-u", "postgres", "--", cmd, ...args]] : [cmd, args];
  const r = spawnSync(full[0], full[1], { encoding: "utf8", ...opts });
  if (r.status !== 0) {
    process.stderr.write(r.stdout ?? "");
    process.stderr.write(r.stderr ?? "");
    throw new Error(`${path.basename(cmd)} failed (exit ${r.status})`);
  }
  return r;
}

// Whether a server is really running on the folder: `pg_ctl status` checks the process named in
// postmaster.pid, so a pid file left behind by a killed run (machine stopped, job killed) does not
// count as a running cluster.
function running(bin) {
  if (!fs.existsSync(path.join(data, "postmaster.pid"))) return false;
  const args = ["status", "-D", data];
  const cmd = path.join(bin, "pg_ctl");
  const r = asRoot ? spawnSync("runuser", ["-u", "postgres", "--", cmd, ...args]) : spawnSync(cmd, args);
  return r.status === 0;
}

function start() {
  const bin = binDir();
  if (running(bin)) return url;
  // Anything left in the folder is from a run that was killed before it could stop: the cluster is
  // throw-away, so start from an empty folder rather than trust a half-written one.
  fs.rmSync(dir, { recursive: true, force: true });
  fs.mkdirSync(dir, { recursive: true });
  if (asRoot) spawnSync("chown", ["-R", "postgres:postgres", dir]);
  if (!fs.existsSync(path.join(data, "PG_VERSION"))) {
    pgRun(path.join(bin, "initdb"), ["-D", data, "-U", "postgres", "--auth=trust", "--encoding=UTF8", "--locale=C.UTF-8", "-N"]);
  }
  const opts = [
    `-p ${port}`,
    "-c listen_addresses=127.0.0.1",
    `-k ${dir}`,
    "-c fsync=off",
    "-c synchronous_commit=off",
    "-c full_page_writes=off",
    "-c max_connections=300",
  ].join(" ");
  pgRun(path.join(bin, "pg_ctl"), ["-D", data, "-l", path.join(dir, "server.log"), "-o", opts, "-w", "start"]);
  return url;
}

function stop() {
  const bin = binDir();
  if (running(bin)) pgRun(path.join(bin, "pg_ctl"), ["-D", data, "-m", "fast", "-w", "stop"]);
  fs.rmSync(dir, { recursive: true, force: true });
}

const [verb, ...rest] = process.argv.slice(2);
if (verb === "start") {
  console.log(start());
} else if (verb === "stop") {
  stop();
} else if (verb === "run") {
  const cmd = rest[0] === "--" ? rest.slice(1) : rest;
  if (!cmd.length) {
    console.error("usage: pg-cluster.mjs run -- <command…>");
    process.exit(2);
  }
  const testUrl = start();
  console.log(`[pg] PostgreSQL test cluster on ${testUrl}`);
  const child = spawn(cmd[0], cmd.slice(1), { stdio: "inherit", env: { ...process.env, TEST_DATABASE_URL: testUrl } });
  const forward = (sig) => child.kill(sig);
  process.on("SIGINT", forward);
  process.on("SIGTERM", forward);
  child.on("exit", (code, signal) => {
    try {
      stop();
    } catch (err) {
      console.error(String(err));
    }
    process.exit(code ?? (signal ? 1 : 0));
  });
} else {
  console.error("usage: pg-cluster.mjs start | stop | run -- <command…>");
  process.exit(2);
}

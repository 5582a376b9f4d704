#!/usr/bin/env node
// The whole test suite, on both databases: typecheck, lint (ESLint), the format check (Prettier), one
// production build, then Vitest and the browser tests on SQLite, then the same on a throw-away PostgreSQL cluster (scripts/pg-cluster.mjs),
// then two web servers and two workers sharing that database and a fake S3 bucket (scripts/two-process.ts).
//   node scripts/test-all.mjs                 both databases (what `npm test` and .ci/run do)
//   node scripts/test-all.mjs --only sqlite   SQLite only
//   node scripts/test-all.mjs --only pg       PostgreSQL only (`npm run test:pg`)
// TEST_DATABASE_URL=postgres://… uses that server instead of starting a cluster (it must let the
// user create databases). Prints how long each step took.
import { spawnSync } from "node:child_process";
import path from "node:path";

const root = path.resolve(import.meta.dirname, "..");
const onlyAt = process.argv.indexOf("--only");
const only = onlyAt > 0 ? process.argv[onlyAt + 1] : null;
if (only && only !== "sqlite" && only !== "pg") {
  console.error("usage: test-all.mjs [--only sqlite|pg]");
  process.exit(2);
}
const external = process.env.TEST_DATABASE_URL && /^postgres(ql)?:\/\//.test(process.env.TEST_DATABASE_URL) ? process.env.TEST_DATABASE_URL : null;
const timings = [];

function step(name, cmd, args, env = {}) {
  const started = Date.now();
  console.log(`\n[test] ── ${name} ──`);
  const base = { ...process.env };
  delete base.TEST_DATABASE_URL;
  const r = spawnSync(cmd, args, { cwd: root, stdio: "inherit", env: { ...base, ...env } });
  const seconds = (Date.now() - started) / 1000;
  timings.push([name, seconds]);
  if (r.status !== 0) throw new StepFailed(name, r.status ?? r.signal);
}

class StepFailed extends Error {
  constructor(name, exit) {
    super(`${name} (exit ${exit})`);
  }
}

function report() {
  console.log("\n[test] step                                  seconds");
  for (const [name, s] of timings) console.log(`[test] ${name.padEnd(38)} ${s.toFixed(1).padStart(7)}`);
  console.log(
    `[test] ${"total".padEnd(38)} ${timings
      .reduce((a, [, s]) => a + s, 0)
      .toFixed(1)
      .padStart(7)}`,
  );
}

try {
  step("typecheck", "npm", ["run", "--silent", "typecheck"]);
  step("lint", "npx", ["eslint", "."]);
  step("format check", "npx", ["prettier", "--check", "."]);
  step("build", "npx", ["react-router", "build"]);

  if (only !== "pg") {
    step("Vitest on SQLite", "npx", ["vitest", "run"]);
    step("browser tests on SQLite", "npx", ["playwright", "test"]);
  }

  if (only !== "sqlite") {
    let url = external;
    if (!url) {
      const started = spawnSync("node", ["scripts/pg-cluster.mjs", "start"], { cwd: root, encoding: "utf8", stdio: ["ignore", "pipe", "inherit"] });
      if (started.status !== 0) {
        console.error("[test] PostgreSQL could not be started for the second pass: install Debian's postgresql package (.ci/run does), or set TEST_DATABASE_URL to a server of your own.");
        process.exit(1);
      }
      url = started.stdout.trim().split("\n").pop();
    }
    try {
      step("Vitest on PostgreSQL", "npx", ["vitest", "run"], { TEST_DATABASE_URL: url });
      step("browser tests on PostgreSQL", "npx", ["playwright", "test"], { TEST_DATABASE_URL: url });
    // Two web servers and two workers on one PostgreSQL database and a fake S3 bucket, then one SQLite server.
    step("two processes, PostgreSQL + S3", "npx", ["tsx", "scripts/two-process.ts"], { TEST_DATABASE_URL: url });
    } finally {
      if (!external) spawnSync("node", ["scripts/pg-cluster.mjs", "stop"], { cwd: root, stdio: "inherit" });
    }
  }
} catch (err) {
  report();
  console.error(`[test] FAILED: ${err instanceof StepFailed ? err.message : err}`);
  process.exit(1);
}
report();

#!/usr/bin/env node
// The whole test suite, on both databases: typecheck, lint, format check and one production build,
// then Vitest and the browser tests on SQLite, then the same on a throw-away PostgreSQL cluster
// (scripts/pg-cluster.mjs), then two web servers and two workers sharing that database and a fake
// S3 bucket (scripts/two-process.ts).
//   node scripts/test-all.mjs                 both databases (what `npm test` and .ci/run do)
//   node scripts/test-all.mjs --only sqlite   SQLite only
//   node scripts/test-all.mjs --only pg       PostgreSQL only (`npm run test:pg`)
// TEST_DATABASE_URL=postgres://… uses that server instead of starting a cluster (it must let the
// user create databases). Prints how long each step took.
//
// Vitest and the browser tests of one database run side by side: they share nothing (Vitest makes
// a database per file, the browser tests' server its own), the browser tests spend most of their
// time waiting on one server and one browser, and the two together take about the time of the
// longer one instead of the sum (Decision 46). Their lines are prefixed with the step's tag.
import { spawn, spawnSync } from "node:child_process";
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
const started = Date.now();

class StepFailed extends Error {
  constructor(name, exit) {
    super(`${name} (exit ${exit})`);
  }
}

function stepEnv(env) {
  const base = { ...process.env };
  delete base.TEST_DATABASE_URL;
  return { ...base, ...env };
}

/** One step, its output straight through. */
function step(name, cmd, args, env = {}) {
  const t0 = Date.now();
  console.log(`\n[test] ── ${name} ──`);
  const r = spawnSync(cmd, args, { cwd: root, stdio: "inherit", env: stepEnv(env) });
  timings.push([name, (Date.now() - t0) / 1000]);
  if (r.status !== 0) throw new StepFailed(name, r.status ?? r.signal);
}

/** Several steps at once, each line of their output prefixed with the step's tag; fails if any fails. */
async function together(steps) {
  console.log(`\n[test] ── ${steps.map((s) => s.name).join(" ‖ ")} ──`);
  const results = await Promise.all(
    steps.map(
      ({ name, tag, cmd, args, env = {} }) =>
        new Promise((resolve) => {
          const t0 = Date.now();
          const child = spawn(cmd, args, { cwd: root, stdio: ["ignore", "pipe", "pipe"], env: stepEnv({ FORCE_COLOR: "0", ...env }) });
          for (const stream of [child.stdout, child.stderr]) {
            let rest = "";
            stream.on("data", (chunk) => {
              const lines = (rest + chunk.toString()).split("\n");
              rest = lines.pop();
              for (const line of lines) process.stdout.write(`[${tag}] ${line}\n`);
            });
            stream.on("end", () => rest && process.stdout.write(`[${tag}] ${rest}\n`));
          }
          child.on("close", (code, signal) => {
            timings.push([name, (Date.now() - t0) / 1000]);
            resolve({ name, exit: code ?? signal });
          });
        }),
    ),
  );
  const failed = results.filter((r) => r.exit !== 0);
  if (failed.length) throw new StepFailed(failed.map((f) => f.name).join(", "), failed.map((f) => f.exit).join(", "));
}

function report() {
  console.log("\n[test] step                                  seconds");
  for (const [name, s] of timings) console.log(`[test] ${name.padEnd(38)} ${s.toFixed(1).padStart(7)}`);
  console.log(`[test] ${"wall clock".padEnd(38)} ${((Date.now() - started) / 1000).toFixed(1).padStart(7)}`);
}

try {
  step("typecheck", "npm", ["run", "--silent", "typecheck"]);
  // The typecheck made the route types that ESLint's type-aware rules read.
  await together([
    { name: "lint", tag: "lint", cmd: "npx", args: ["eslint", "."] },
    { name: "format check", tag: "format", cmd: "npx", args: ["prettier", "--check", "."] },
  ]);
  step("build", "npx", ["react-router", "build"]);

  if (only !== "pg") {
    await together([
      { name: "Vitest on SQLite", tag: "sqlite:vitest", cmd: "npx", args: ["vitest", "run"] },
      { name: "browser tests on SQLite", tag: "sqlite:browser", cmd: "npx", args: ["playwright", "test"] },
    ]);
  }

  if (only !== "sqlite") {
    let url = external;
    if (!url) {
      const cluster = spawnSync("node", ["scripts/pg-cluster.mjs", "start"], { cwd: root, encoding: "utf8", stdio: ["ignore", "pipe", "inherit"] });
      if (cluster.status !== 0) {
        console.error(
          "[test] PostgreSQL could not be started for the second pass: install Debian's postgresql package (.ci/run does), or set TEST_DATABASE_URL to a server of your own.",
        );
        process.exit(1);
      }
      url = cluster.stdout.trim().split("\n").pop();
    }
    try {
      await together([
        { name: "Vitest on PostgreSQL", tag: "pg:vitest", cmd: "npx", args: ["vitest", "run"], env: { TEST_DATABASE_URL: url } },
        { name: "browser tests on PostgreSQL", tag: "pg:browser", cmd: "npx", args: ["playwright", "test"], env: { TEST_DATABASE_URL: url } },
      ]);
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

#!/usr/bin/env node
// The whole test suite, on both databases: typecheck, lint and format check, one production build,
// Vitest and the browser tests on SQLite and on a throw-away PostgreSQL cluster
// (scripts/pg-cluster.mjs), and two web servers and two workers sharing that database and a fake S3
// bucket (scripts/two-process.ts).
//   node scripts/test-all.mjs                 both databases (what `npm test` and .ci/run do)
//   node scripts/test-all.mjs --only sqlite   SQLite only
//   node scripts/test-all.mjs --only pg       PostgreSQL only (`npm run test:pg`)
// TEST_DATABASE_URL=postgres://… uses that server instead of starting a cluster (it must let the
// user create databases). Prints how long each step took.
//
// Two lanes run side by side after the checks (Decision 52): the server-side lane (Vitest on
// SQLite, Vitest on PostgreSQL, then the two-process test) and the browser lane (build, browser
// tests on SQLite, then on PostgreSQL). They share nothing but the PostgreSQL cluster (each Vitest
// file makes its own database, the browser tests' server its own, the two-process test its own),
// and the browser lane spends much of its time waiting on one server and one browser. Their lines
// are prefixed with the step's tag.
//
// The ray-traced scene tests (tests/scenes) have their own Vitest config; those listed in
// scripts/scenes-in-suite.mjs run at the end of the server lane, their stacks rendered where missing
// by a low-priority step that starts with the lanes.
//
// Test files that never touch a database (listed in scripts/database-free-tests.mjs, and checked to
// stay so by tests/unit/database-free.test.ts) run in the SQLite pass only.
import { spawn, spawnSync } from "node:child_process";
import path from "node:path";
import { databaseFreeTests } from "./database-free-tests.mjs";
import { sceneStacksInSuite, sceneTestFilesInSuite, trackedScenesInSuite } from "./scenes-in-suite.mjs";

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
const failures = [];

function stepEnv(env) {
  const base = { ...process.env };
  delete base.TEST_DATABASE_URL;
  return { ...base, ...env };
}

/** One step, each line of its output prefixed with its tag; resolves to true when it passed. */
function run({ name, tag, cmd, args, env = {} }) {
  return new Promise((resolve) => {
    const t0 = Date.now();
    console.log(`[test] ── ${name} ── started`);
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
      const seconds = (Date.now() - t0) / 1000;
      timings.push([name, seconds]);
      const exit = code ?? signal;
      console.log(`[test] ── ${name} ── ${exit === 0 ? "passed" : `FAILED (exit ${exit})`} after ${seconds.toFixed(1)} s`);
      if (exit !== 0) failures.push(`${name} (exit ${exit})`);
      resolve(exit === 0);
    });
  });
}

/** Steps one after another; a failed step ends its lane (the other lane goes on). */
async function lane(steps) {
  for (const s of steps) {
    const env = typeof s.env === "function" ? await s.env() : s.env;
    if (env === null) return; // its prerequisite failed (reported there)
    if (!(await run({ ...s, env }))) return;
  }
}

// The PostgreSQL cluster, started once when the first step needs it, stopped at the end.
let cluster = null;
function postgresUrl() {
  cluster ??= (async () => {
    if (external) return external;
    const r = spawnSync("node", ["scripts/pg-cluster.mjs", "start"], { cwd: root, encoding: "utf8", stdio: ["ignore", "pipe", "inherit"] });
    if (r.status !== 0) {
      failures.push("PostgreSQL could not be started: install Debian's postgresql package (.ci/run does), or set TEST_DATABASE_URL to a server of your own");
      return null;
    }
    const url = r.stdout.trim().split("\n").pop();
    console.log(`[test] PostgreSQL test cluster on ${url}`);
    return url;
  })();
  return cluster;
}
const onPostgres = async () => {
  const url = await postgresUrl();
  return url ? { TEST_DATABASE_URL: url } : null;
};

function report() {
  console.log("\n[test] step                                  seconds");
  for (const [name, s] of timings) console.log(`[test] ${name.padEnd(38)} ${s.toFixed(1).padStart(7)}`);
  console.log(`[test] ${"wall clock".padEnd(38)} ${((Date.now() - started) / 1000).toFixed(1).padStart(7)}`);
}

const sqlite = only !== "pg";
const postgres = only !== "sqlite";
const excludeDatabaseFree = databaseFreeTests.flatMap((glob) => ["--exclude", glob]);

// Route types first: tsc and ESLint's type-aware rules both read them.
const typegen = spawnSync("npx", ["react-router", "typegen"], { cwd: root, stdio: "inherit", env: stepEnv({}) });
if (typegen.status !== 0) {
  console.error("[test] FAILED: react-router typegen");
  process.exit(1);
}
await Promise.all([
  run({ name: "typecheck", tag: "tsc", cmd: "npx", args: ["tsc"] }),
  run({ name: "lint", tag: "lint", cmd: "npx", args: ["eslint", "."] }),
  run({ name: "format check", tag: "format", cmd: "npx", args: ["prettier", "--check", "."] }),
]);

if (!failures.length) {
  const serverLane = [];
  if (sqlite) serverLane.push({ name: "Vitest on SQLite", tag: "sqlite:vitest", cmd: "npx", args: ["vitest", "run"] });
  if (postgres) {
    serverLane.push({ name: "Vitest on PostgreSQL", tag: "pg:vitest", cmd: "npx", args: ["vitest", "run", ...excludeDatabaseFree], env: onPostgres });
  }
  const browserLane = [{ name: "build", tag: "build", cmd: "npx", args: ["react-router", "build"] }];
  if (sqlite) browserLane.push({ name: "browser tests on SQLite", tag: "sqlite:browser", cmd: "npx", args: ["playwright", "test"] });
  if (postgres) browserLane.push({ name: "browser tests on PostgreSQL", tag: "pg:browser", cmd: "npx", args: ["playwright", "test"], env: onPostgres });

  // The scene stacks the suite reads are rendered from the start, by POV-Ray at low priority (nice
  // 10): a clean clone has none, and the browser lane leaves much of the processors idle while it
  // waits on its server and browser. The scene tests wait for it.
  const scenesRendered = sqlite
    ? run({ name: "scene stacks rendered", tag: "render", cmd: "nice", args: ["-n", "10", "npx", "tsx", "scripts/render-scenes.ts", ...sceneStacksInSuite] })
    : Promise.resolve(false);

  // The two-process test needs the build: it runs once the server lane is done and the build is made.
  let built;
  const buildDone = new Promise((resolve) => (built = resolve));
  const browserDone = (async () => {
    const [build, ...rest] = browserLane;
    const ok = await run(build);
    built(ok);
    if (ok) await lane(rest);
  })();
  const serverDone = (async () => {
    await lane(serverLane);
    if (postgres && (await buildDone)) {
      // Two web servers and two workers on one PostgreSQL database and a fake S3 bucket, then one SQLite server.
      await lane([{ name: "two processes, PostgreSQL + S3", tag: "two-process", cmd: "npx", args: ["tsx", "scripts/two-process.ts"], env: onPostgres }]);
    }
    // The ray-traced tank scenes whose tests run in the suite (scenes-in-suite.mjs), once their
    // stacks are rendered (a failed render is reported as its own step).
    if (sqlite && (await scenesRendered)) {
      const files = [...sceneTestFilesInSuite, ...(trackedScenesInSuite.length ? ["tests/scenes/scene-tracking.test.ts"] : [])];
      await lane([
        {
          name: "ray-traced scenes",
          tag: "scenes",
          cmd: "npx",
          args: ["vitest", "run", "--config", "tests/scenes/vitest.config.ts", ...files],
          env: { TANKSIDE_SCENE_VARIANTS: trackedScenesInSuite.join(",") },
        },
      ]);
    }
  })();
  await Promise.all([browserDone, serverDone]);
  if (cluster && !external && (await cluster)) spawnSync("node", ["scripts/pg-cluster.mjs", "stop"], { cwd: root, stdio: "inherit" });
}

report();
if (failures.length) {
  console.error(`[test] FAILED: ${failures.join(", ")}`);
  process.exit(1);
}

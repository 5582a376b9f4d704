// Starts the built server for the browser tests on a fresh database, seeded with the demo lab,
// with the fake mail server (no SMTP_URL); on PostgreSQL when TEST_DATABASE_URL names a server.
import { spawn, spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { freshDatabaseUrl, onPostgres } from "./test-database.mjs";
import { serverNodeFlags } from "../../scripts/node-flags.mjs";

const root = path.resolve(import.meta.dirname, "../..");
// One folder per port, so two test runs on one machine do not share a database.
const tmp = path.join(root, "tests/.tmp", `e2e-${process.env.E2E_PORT ?? "3210"}`);
fs.rmSync(tmp, { recursive: true, force: true });
fs.mkdirSync(path.join(tmp, "uploads"), { recursive: true });

const env = { ...process.env };
delete env.SMTP_URL;
Object.assign(env, {
  NODE_ENV: "production",
  TANKSIDE_DEMO: "1",
  TANKSIDE_FAKE_MAIL: "1",
  PORT: process.env.E2E_PORT ?? "3210",
  HOST: "127.0.0.1",
  DATABASE_URL: await freshDatabaseUrl(`e2e_${process.env.E2E_PORT ?? "3210"}`, tmp),
  UPLOADS_DIR: path.join(tmp, "uploads"),
  SESSION_SECRET: "e2e-session-secret-0123456789abcdef",
  APP_URL: `http://127.0.0.1:${process.env.E2E_PORT ?? "3210"}`,
});

console.log(`[e2e] database: ${onPostgres ? "PostgreSQL" : "SQLite"}`);
const seed = spawnSync("npx", ["tsx", "scripts/seed-demo.ts"], { cwd: root, env, stdio: "inherit" });
if (seed.status !== 0) process.exit(seed.status ?? 1);
const server = spawn("node", [...serverNodeFlags, "server.mjs"], { cwd: root, env, stdio: "inherit" });
for (const sig of ["SIGINT", "SIGTERM"]) process.on(sig, () => server.kill(sig));
server.on("exit", (code) => process.exit(code ?? 0));

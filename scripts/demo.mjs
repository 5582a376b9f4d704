// npm run demo: migrate, seed the invented lab when the database is empty, build, and serve with the fake mail server.
import { spawnSync, spawn } from "node:child_process";
import crypto from "node:crypto";

const env = {
  ...process.env,
  TANKSIDE_DEMO: "1",
  // The demo has no relay: its mail goes to the built-in fake server, shown on the mail page.
  TANKSIDE_FAKE_MAIL: "1",
  NODE_ENV: "production",
  SESSION_SECRET: process.env.SESSION_SECRET ?? crypto.randomBytes(32).toString("hex"),
};

function run(cmd, args) {
  const r = spawnSync(cmd, args, { stdio: "inherit", env });
  if (r.status !== 0) process.exit(r.status ?? 1);
}

run("npx", ["tsx", "scripts/seed-demo.ts"]);
if (!process.argv.includes("--no-build")) run("npx", ["react-router", "build"]);
const server = spawn("node", ["server.mjs"], { stdio: "inherit", env });
for (const sig of ["SIGINT", "SIGTERM"]) process.on(sig, () => server.kill(sig));
server.on("exit", (code) => process.exit(code ?? 0));

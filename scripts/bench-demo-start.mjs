// How long `npm run demo` takes to answer as Tankside (not the "getting ready" 503), on a fresh
// clone of this repository (build and empty database included) and then on a restart of the same
// clone. `npm install` is not timed: the clone's node_modules are hard links to this checkout's.
// Prints one JSON line: freshSeconds, restartSeconds, portAnsweredSeconds, stoppedBySigterm, loadAverage.
// Usage: node scripts/bench-demo-start.mjs [--port 3990] [--dir /tmp/tankside-demo-start]
import { execFileSync, spawn } from "node:child_process";
import { rmSync } from "node:fs";
import net from "node:net";
import os from "node:os";
import path from "node:path";

const arg = (name, fallback) => {
  const i = process.argv.indexOf(name);
  return i >= 0 ? process.argv[i + 1] : fallback;
};
const root = path.resolve(import.meta.dirname, "..");
const port = Number(arg("--port", "3990"));
const dir = path.resolve(arg("--dir", path.join(os.tmpdir(), "tankside-demo-start")));

rmSync(dir, { recursive: true, force: true });
execFileSync("git", ["clone", "-q", root, dir]);
execFileSync("cp", ["-al", path.join(root, "node_modules"), path.join(dir, "node_modules")]);

const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

async function status() {
  try {
    const res = await fetch(`http://127.0.0.1:${port}/sign-in`, { redirect: "manual", signal: AbortSignal.timeout(2000) });
    await res.arrayBuffer();
    return res.status;
  } catch {
    return 0;
  }
}

async function portFree() {
  return new Promise((resolve) => {
    const s = net.connect(port, "127.0.0.1");
    s.once("connect", () => (s.destroy(), resolve(false)));
    s.once("error", () => resolve(true));
  });
}

async function start(label) {
  const t0 = performance.now();
  const child = spawn("npm", ["run", "demo"], { cwd: dir, env: { ...process.env, PORT: String(port) }, stdio: ["ignore", "pipe", "pipe"] });
  let log = "";
  child.stdout.on("data", (d) => (log += d));
  child.stderr.on("data", (d) => (log += d));
  let firstAnswer = null;
  for (;;) {
    const s = await status();
    const t = (performance.now() - t0) / 1000;
    if (s !== 0 && firstAnswer === null) firstAnswer = t;
    if (s === 200) {
      console.error(`${label}: port answered after ${firstAnswer.toFixed(1)} s, Tankside after ${t.toFixed(1)} s`);
      return { child, seconds: t, portAnswered: firstAnswer };
    }
    if (t > 300 || child.exitCode !== null) throw new Error(`${label}: no answer after ${t.toFixed(0)} s\n${log}`);
    await sleep(100);
  }
}

async function stop(child) {
  child.kill("SIGTERM");
  for (let i = 0; i < 100; i++) {
    if (child.exitCode !== null && (await portFree())) return true;
    await sleep(100);
  }
  child.kill("SIGKILL");
  return false;
}

if (!(await portFree())) throw new Error(`Port ${port} is in use.`);
const fresh = await start("fresh clone");
// Let the background seeding finish before the restart, as a person trying the demo would.
await sleep(Number(arg("--settle", "20")) * 1000);
const stopped1 = await stop(fresh.child);
const again = await start("restart");
const stopped2 = await stop(again.child);
console.log(
  JSON.stringify({
    freshSeconds: Number(fresh.seconds.toFixed(1)),
    restartSeconds: Number(again.seconds.toFixed(1)),
    portAnsweredSeconds: Number(fresh.portAnswered.toFixed(1)),
    stoppedBySigterm: stopped1 && stopped2,
    loadAverage: os.loadavg().map((l) => Number(l.toFixed(2))),
    cpus: os.availableParallelism(),
  }),
);

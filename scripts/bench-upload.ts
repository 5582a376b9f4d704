/**
 * Tracking while the frames arrive, end to end (Decision 61): starts the built server on a
 * throw-away database (SQLite, or PostgreSQL with TEST_DATABASE_URL as for bench:runs), logs a run
 * with its view setup, uploads `npm run bench`'s rendered 600-frame 1280×720 float stack through
 * the API in 6 parallel streams (each frame declaring its number and the stack's length, the
 * background's frames first) and waits for the verdict. Prints details on stderr and, as the last
 * line of stdout, one JSON object: frames, streams, uploadSeconds (first upload sent to last
 * acknowledged), verdictAfterLastFrameSeconds (last acknowledgement to the verdict seen through
 * the API, polled every 25 ms), verdict, peakRssMB (the server's peak resident memory, worker
 * threads included, from /proc), framesSearchedAsTheyArrived (from the server's log).
 * `--port N` (default E2E_PORT or 4312); `--streams N` (default 6). Builds first when build/ is missing
 * or with `--build`.
 */
import { spawn, spawnSync } from "node:child_process";
import { existsSync, mkdirSync, readFileSync, rmSync } from "node:fs";
import { readdir, readFile } from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import { fileURLToPath } from "node:url";
import { freshDatabaseUrl } from "../tests/setup/test-database.mjs";
import { streamingOrder } from "../app/lib/frame-stream";
import { serverNodeFlags } from "./node-flags.mjs";

const root = path.resolve(path.dirname(fileURLToPath(import.meta.url)), "..");
const arg = (name: string, fallback: string) => {
  const i = process.argv.indexOf(name);
  return i >= 0 ? (process.argv[i + 1] ?? fallback) : fallback;
};
const port = Number(arg("--port", process.env.E2E_PORT ?? "4312"));
const streams = Number(arg("--streams", "6"));
const base = `http://127.0.0.1:${port}`;
const log = (message: string) => process.stderr.write(`${message}\n`);

/** The float stack `npm run bench` renders and keeps (its cache folder, rendered by it when missing). */
async function benchStack(): Promise<string[]> {
  const parent = path.join(root, "node_modules/.cache/tankside-bench");
  const find = async () => {
    if (!existsSync(parent)) return null;
    for (const name of await readdir(parent)) {
      if (name.startsWith("float-600-1280x720-") && existsSync(path.join(parent, name, "complete.json"))) return path.join(parent, name);
    }
    return null;
  };
  let dir = await find();
  if (!dir) {
    log("rendering the bench stack (npm run bench's renderer, once) …");
    const child = spawnSync(process.execPath, ["--import", "tsx", path.join(root, "scripts/bench-tracking.ts"), "--render", "--tracer", "float"], {
      cwd: root,
      stdio: ["ignore", "inherit", "inherit"],
    });
    if (child.status !== 0) throw new Error("Rendering the bench stack failed.");
    dir = await find();
    if (!dir) throw new Error("The bench stack was not found after rendering.");
  }
  const names = (await readdir(dir)).filter((n) => n.endsWith(".jpg")).sort();
  if (names.length !== 600) throw new Error(`The bench stack in ${dir} has ${names.length} frames, not 600.`);
  return names.map((n) => path.join(dir, n));
}

/** A run on a fresh lab with the bench stack's view, and a technician's API token; in this process, before the server starts. */
async function prepareDatabase(env: NodeJS.ProcessEnv) {
  Object.assign(process.env, env);
  const { migrate, sequelize, ViewSetup } = await import("../app/.server/db");
  const { seedRunLab, runInput } = await import("../app/.server/runs/testing");
  const { createRun } = await import("../app/.server/runs/service");
  const { createApiToken } = await import("../app/.server/auth/api-tokens");
  await migrate();
  const lab = await seedRunLab();
  // The bench stack: 10 rpm anticlockwise, a camera turning with the table, 30 frames/s.
  const run = await createRun(runInput(lab, { setRateRpm: 10, direction: "ccw", cameraMode: "rotating", frameRateFps: 30 }), lab.technician);
  // The view set before the frames come, as when it is carried over from the camera's last run.
  await ViewSetup.create({
    runId: run.id,
    cameraId: run.cameraId,
    centreXPx: 640,
    centreYPx: 360,
    tankEdgeXPx: 640,
    tankEdgeYPx: 360,
    tankEdgeRPx: 335,
    scalePxPerM: 1000,
    scalePoints: null,
    mirrored: false,
    createdById: lab.technician.id,
  });
  const { token } = await createApiToken(lab.technician.id, "bench-upload");
  await sequelize.close();
  return { runId: run.id, token };
}

async function waitForServer(server: ReturnType<typeof spawn>) {
  const started = Date.now();
  for (;;) {
    if (server.exitCode !== null) throw new Error(`The server stopped with code ${server.exitCode}.`);
    try {
      const res = await fetch(`${base}/api/v1/openapi.json`);
      if (res.ok) return;
    } catch {
      // not yet listening
    }
    if (Date.now() - started > 120_000) throw new Error("The server did not answer within 2 minutes.");
    await new Promise((r) => setTimeout(r, 200));
  }
}

function peakRssMB(pid: number): number | null {
  try {
    const status = readFileSync(`/proc/${pid}/status`, "utf8");
    const m = /VmHWM:\s+(\d+) kB/.exec(status);
    return m ? Math.round(Number(m[1]) / 1024) : null;
  } catch {
    return null;
  }
}

async function main() {
  const files = await benchStack();
  const tmp = path.join(os.tmpdir(), `tankside-bench-upload-${process.pid}`);
  rmSync(tmp, { recursive: true, force: true });
  mkdirSync(path.join(tmp, "uploads"), { recursive: true });
  const env: NodeJS.ProcessEnv = {
    NODE_ENV: "production",
    TANKSIDE_FAKE_MAIL: "1",
    PORT: String(port),
    HOST: "127.0.0.1",
    DATABASE_URL: await freshDatabaseUrl(`bench_upload_${process.pid}`, tmp),
    UPLOADS_DIR: path.join(tmp, "uploads"),
    SESSION_SECRET: "bench-upload-session-secret-0123456789",
    APP_URL: base,
  };
  const { runId, token } = await prepareDatabase(env);
  if (process.argv.includes("--build") || !existsSync(path.join(root, "build/server/index.js"))) {
    log("building (react-router build) …");
    if (spawnSync("npx", ["react-router", "build"], { cwd: root, stdio: ["ignore", process.stderr, "inherit"] }).status !== 0)
      throw new Error("The build failed.");
  }
  const serverEnv = { ...process.env, ...env };
  delete serverEnv.SMTP_URL;
  const server = spawn(process.execPath, [...serverNodeFlags, "server.mjs"], { cwd: root, env: serverEnv, stdio: ["ignore", "pipe", "pipe"] });
  let serverLog = "";
  server.stdout.on("data", (b: Buffer) => (serverLog += b.toString()));
  server.stderr.on("data", (b: Buffer) => (serverLog += b.toString()));
  try {
    await waitForServer(server);
    const auth = { Authorization: `Bearer ${token}` };
    const order = streamingOrder(files.length);
    const bytes = await Promise.all(files.map((f) => readFile(f)));
    let next = 0;
    let lastAck = 0;
    const started = performance.now();
    log(`uploading ${files.length} frames to run ${runId} in ${streams} streams …`);
    await Promise.all(
      Array.from({ length: streams }, async () => {
        while (next < order.length) {
          const i = order[next++]!;
          const form = new FormData();
          form.set("file", new File([new Uint8Array(bytes[i]!)], path.basename(files[i]!)));
          form.set("frameNumber", String(i + 1));
          form.set("expectedFrames", String(files.length));
          const res = await fetch(`${base}/api/v1/runs/${runId}/frames`, { method: "POST", headers: auth, body: form });
          if (res.status !== 201) throw new Error(`Frame ${i + 1} was answered ${res.status}: ${await res.text()}`);
          await res.arrayBuffer();
          lastAck = Math.max(lastAck, performance.now());
        }
      }),
    );
    const uploadSeconds = (lastAck - started) / 1000;
    log(`uploaded in ${uploadSeconds.toFixed(1)} s; waiting for the verdict …`);
    let verdict: string | null = null;
    for (;;) {
      const res = await fetch(`${base}/api/v1/runs/${runId}`, { headers: auth });
      const body = (await res.json()) as { run?: { verdict: string | null }; verdict?: string | null };
      verdict = body.run?.verdict ?? body.verdict ?? null;
      if (verdict) break;
      const tracking = (await (await fetch(`${base}/api/v1/runs/${runId}/tracking`, { headers: auth })).json()) as {
        job: { state: string; error: string | null } | null;
      };
      if (tracking.job && (tracking.job.state === "failed" || tracking.job.state === "cancelled"))
        throw new Error(`The tracking job ${tracking.job.state}: ${tracking.job.error}`);
      if (performance.now() - lastAck > 600_000) throw new Error("No verdict within 10 minutes of the last frame.");
      await new Promise((r) => setTimeout(r, 25));
    }
    const verdictAfterLastFrameSeconds = (performance.now() - lastAck) / 1000;
    const searched = /run \d+: (\d+) of \d+ frames were searched as they arrived/.exec(serverLog);
    // The job's steps after the last frame, as the server logs them.
    const steps = /\[tracking\] job \d+ \(run \d+\) done: (.*)/.exec(serverLog);
    if (steps) log(`job steps: ${steps[1]}`);
    const result = {
      frames: files.length,
      streams,
      uploadSeconds: Math.round(uploadSeconds * 100) / 100,
      verdictAfterLastFrameSeconds: Math.round(verdictAfterLastFrameSeconds * 100) / 100,
      verdict,
      peakRssMB: peakRssMB(server.pid!),
      framesSearchedAsTheyArrived: searched ? Number(searched[1]) : 0,
      loadAverage: os.loadavg().map((l) => Math.round(l * 10) / 10),
    };
    console.log(JSON.stringify(result));
  } catch (err) {
    log(serverLog.slice(-4000));
    throw err;
  } finally {
    server.kill("SIGTERM");
    await new Promise((r) => server.once("exit", r));
    rmSync(tmp, { recursive: true, force: true });
  }
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});

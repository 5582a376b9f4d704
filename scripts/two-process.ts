// npm run test:two-process — Tankside on more than one process, through its HTTP API.
//
// PostgreSQL: two built web servers (node server.mjs, TANKSIDE_WORKERS=0, different ports) and two
// `npm run worker` processes on one database, with frames in one bucket of a fake S3 server. Ten runs are
// logged, given their frames, set up and sent to tracking across both web servers; progress is read
// from the other server while the workers track. Every run must be tracked exactly once (one job,
// one attempt, taken by one worker) with the tracks of a single-process run.
// SQLite: one web server with its in-process queue (SQLite is single-machine), the same ten runs.
// Both must give the same tracks. Prints what it measured; exits 1 on any failed check.
//
// Needs `react-router build` first (the npm script does it). PostgreSQL: TEST_DATABASE_URL=postgres://…
// if given, else a throw-away cluster on TANKSIDE_PG_PORT (default 54329) from scripts/pg-cluster.mjs.
import { spawnSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import pg from "pg";
import sharp from "sharp";
import sqlite3 from "sqlite3";
import { createBucket, s3Env, startFakeS3 } from "../tests/setup/fake-s3";
import { renderRunFrames } from "../app/lib/tracking/synthetic";
import { floatStackCentre, floatStackSpec } from "../app/lib/tracking/float-stack";
import { Proc, api, baseEnv, countObjects, freePort, json, makeLab, root, web, worker, type Lab } from "./two-process-support";
const RUNS = Number(process.env.TWO_PROCESS_RUNS ?? 10);
const FRAMES = Number(process.env.TWO_PROCESS_FRAMES ?? 90);
const started = Date.now();
const failures: string[] = [];
const check = (ok: boolean, what: string) => {
  console.log(`${ok ? "ok  " : "FAIL"} ${what}`);
  if (!ok) failures.push(what);
};
const seconds = (ms: number) => `${(ms / 1000).toFixed(1)} s`;

if (!fs.existsSync(path.join(root, process.env.TANKSIDE_BUILD_DIR ?? "build", "server/index.js"))) {
  console.error("No build: run `npx react-router build` first (npm run test:two-process does).");
  process.exit(1);
}

// ── Frames: one rendered stack (a float on an inertial circle), the same for every run ──────────
const centre = floatStackCentre;
const spec = floatStackSpec(FRAMES);
const frames: { name: string; jpeg: Buffer }[] = [];
await renderRunFrames(spec, async (f) => {
  const jpeg = await sharp(Buffer.from(f.data), { raw: { width: f.width, height: f.height, channels: 3 } })
    .jpeg({ quality: 92 })
    .toBuffer();
  frames.push({ name: `frame_${String(f.index + 1).padStart(4, "0")}.jpg`, jpeg });
});

interface RunOutcome {
  runId: number;
  jobId: number;
  tracks: { number: number; points: number; detectedShare: number | null; jitterPx: number | null }[];
  csv: string;
  verdict: string | null;
  progressSeen: number[];
}

/**
 * Logs, fills, sets up and tracks RUNS runs. Each run's steps go to the web servers in turn (frames
 * alternate between them), and its progress is read from the server that did not start it.
 */
async function trackRuns(bases: string[], lab: Lab) {
  const pick = (i: number) => bases[i % bases.length]!;
  const tUpload = Date.now();
  const runIds: number[] = [];
  for (let i = 0; i < RUNS; i++) {
    const created = await json<{ id: number }>(
      await api(
        pick(i),
        lab.techToken,
        "POST",
        "/api/v1/runs",
        JSON.stringify({
          tableId: lab.tableId,
          tankId: lab.tankId,
          cameraId: lab.cameraId,
          setRateRpm: 15,
          direction: "ccw",
          waterDepthCm: 10,
          waterTemperatureC: 20,
          cameraMode: "rotating",
          frameRateFps: 30,
          tracer: "float",
          purpose: `Two-process check, run ${i + 1}`,
        }),
        "application/json",
      ),
      [201],
      "log a run",
    );
    runIds.push(created.id);
  }
  // Four uploads at a time, alternating between the servers.
  const uploads = runIds.flatMap((runId) => frames.map((f, k) => ({ runId, f, k })));
  let next = 0;
  await Promise.all(
    Array.from({ length: 4 }, async () => {
      while (next < uploads.length) {
        const { runId, f, k } = uploads[next++]!; // next < uploads.length was checked just above, with no await between
        const form = new FormData();
        form.append("file", new Blob([new Uint8Array(f.jpeg)], { type: "image/jpeg" }), f.name);
        const res = await api(pick(k), lab.techToken, "POST", `/api/v1/runs/${runId}/frames`, form);
        if (res.status !== 201) throw new Error(`upload ${f.name} to run ${runId}: HTTP ${res.status} ${await res.text()}`);
      }
    }),
  );
  const uploadMs = Date.now() - tUpload;
  // The view setup is a page form: sign in on one server; the session (in the database) holds on the other too.
  const home = pick(0);
  const signIn = await fetch(`${home}/sign-in`, {
    method: "POST",
    redirect: "manual",
    headers: { Origin: home, "Content-Type": "application/x-www-form-urlencoded" },
    body: new URLSearchParams({ email: lab.email, password: lab.password }),
  });
  const cookie = (signIn.headers.get("set-cookie") ?? "").split(";")[0];
  if (signIn.status !== 302 || !cookie) throw new Error(`sign-in: HTTP ${signIn.status} ${(await signIn.text()).slice(0, 300)}`);
  for (const [i, runId] of runIds.entries()) {
    const form = new URLSearchParams({
      centreX: String(centre.x),
      centreY: String(centre.y),
      edgeX: String(centre.x),
      edgeY: String(centre.y),
      edgeR: "105",
      scaleLengthPx: "60",
      scaleLengthCm: "10",
    });
    const base = pick(i + 1);
    const res = await fetch(`${base}/runs/${runId}/setup`, {
      method: "POST",
      redirect: "manual",
      headers: { Cookie: cookie, Origin: base, "Content-Type": "application/x-www-form-urlencoded" },
      body: form,
    });
    const location = res.headers.get("location") ?? "";
    if (res.status !== 302 || !location.startsWith(`/runs/${runId}`))
      throw new Error(`view setup of run ${runId}: HTTP ${res.status} to ${location} ${(await res.text()).slice(0, 300)}`);
  }
  const tTrack = Date.now();
  const jobIds: number[] = [];
  for (const [i, runId] of runIds.entries()) {
    const res = await json<{ job: { id: number } }>(
      await api(pick(i), lab.techToken, "POST", `/api/v1/runs/${runId}/tracking`),
      [202],
      `start tracking run ${runId}`,
    );
    jobIds.push(res.job.id);
  }
  // The run page's poll, from the server that did not start the job.
  const progressSeen = new Map<number, Set<number>>(runIds.map((id) => [id, new Set()]));
  const open = new Set(runIds);
  while (open.size) {
    if (Date.now() - tTrack > 600_000) throw new Error(`tracking did not finish in 10 minutes; still open: ${[...open].join(", ")}`);
    for (const [i, runId] of runIds.entries()) {
      if (!open.has(runId)) continue;
      const { job } = await json<{ job: { state: string; framesDone: number; error: string | null } }>(
        await api(pick(i + 1), lab.techToken, "GET", `/api/v1/runs/${runId}/tracking`),
        [200],
        "poll",
      );
      if (job.state === "running") progressSeen.get(runId)!.add(job.framesDone);
      if (job.state === "done") open.delete(runId);
      else if (job.state === "failed" || job.state === "cancelled") throw new Error(`run ${runId}: job ${job.state}: ${job.error}`);
    }
    await new Promise((r) => setTimeout(r, 200));
  }
  const trackMs = Date.now() - tTrack;
  // Let the theory checks that follow tracking land before reading verdicts.
  await new Promise((r) => setTimeout(r, 1500));
  const outcomes: RunOutcome[] = [];
  for (const [i, runId] of runIds.entries()) {
    const tracking = await json<{ job: { id: number }; tracks: RunOutcome["tracks"] }>(
      await api(pick(i), lab.techToken, "GET", `/api/v1/runs/${runId}/tracking`),
      [200],
      "tracking",
    );
    const csvRes = await api(pick(i + 1), lab.techToken, "GET", `/api/v1/runs/${runId}/tracks.csv`);
    if (csvRes.status !== 200) throw new Error(`tracks.csv of run ${runId}: HTTP ${csvRes.status}`);
    // The first column is the track's row id, which differs between runs; the points must not.
    const csv = (await csvRes.text())
      .trim()
      .split("\n")
      .map((line) => line.split(",").slice(1).join(","))
      .join("\n");
    const run = await json<{ verdict?: string | null; check?: { verdict?: string } | null }>(
      await api(pick(i), lab.techToken, "GET", `/api/v1/runs/${runId}`),
      [200],
      "run",
    );
    outcomes.push({
      runId,
      jobId: tracking.job.id,
      tracks: tracking.tracks.map(({ number, points, detectedShare, jitterPx }) => ({ number, points, detectedShare, jitterPx })),
      csv,
      verdict: run.verdict ?? run.check?.verdict ?? null,
      progressSeen: [...progressSeen.get(runId)!].sort((a, b) => a - b),
    });
  }
  return { outcomes, jobIds, uploadMs, trackMs };
}

const sameTracks = (a: RunOutcome, b: RunOutcome) =>
  a.csv === b.csv &&
  JSON.stringify(a.tracks.map(({ number, points }) => [number, points])) === JSON.stringify(b.tracks.map(({ number, points }) => [number, points]));

// ── PostgreSQL: two web servers, two workers ─────────────────────────────────────────────────
const tmp = path.join(root, "tests/.tmp", `two-process-${process.pid}`);
fs.rmSync(tmp, { recursive: true, force: true });
fs.mkdirSync(tmp, { recursive: true });
let startedCluster = false;
let adminUrl = process.env.TEST_DATABASE_URL ?? "";
if (!/^postgres(ql)?:\/\//.test(adminUrl)) {
  const r = spawnSync(process.execPath, ["scripts/pg-cluster.mjs", "start"], { cwd: root, encoding: "utf8" });
  if (r.status !== 0) throw new Error(`PostgreSQL did not start:\n${r.stdout}\n${r.stderr}`);
  adminUrl = r.stdout.trim().split("\n").pop()!;
  startedCluster = true;
}
const dbName = `tankside_two_process_${process.pid}`;
const admin = new pg.Client({ connectionString: adminUrl });
await admin.connect();
await admin.query(`DROP DATABASE IF EXISTS ${dbName}`);
await admin.query(`CREATE DATABASE ${dbName}`);
const pgUrl = Object.assign(new URL(adminUrl), { pathname: `/${dbName}` }).toString();

// Frames in object storage: a fake S3 server from npm (s3rver) with one bucket, shared by all four.
const fakeS3 = await startFakeS3();
const bucket = await createBucket(fakeS3, "tankside-two-process");

const procs: Proc[] = [];
let pgOutcome: Awaited<ReturnType<typeof trackRuns>>;
let workerJobs: number[][] = [];
process.on("exit", () => fs.rmSync(tmp, { recursive: true, force: true }));
try {
  const env = { ...baseEnv(pgUrl, path.join(tmp, "pg-uploads")), ...s3Env(fakeS3, bucket) };
  const lab = makeLab(env);
  const [portA, portB] = [await freePort(), await freePort()];
  const tBoot = Date.now();
  const webs = [web("web A", portA, { ...env, TANKSIDE_WORKERS: "0" }), web("web B", portB, { ...env, TANKSIDE_WORKERS: "0" })];
  const workers = [worker("worker 1", env), worker("worker 2", env)];
  procs.push(...webs, ...workers);
  await Promise.all([...webs.map((w) => w.waitFor(/\[tankside\] serving on/)), ...workers.map((w) => w.waitFor(/\[worker\] taking/))]);
  console.log(`PostgreSQL: 2 web servers (TANKSIDE_WORKERS=0) and 2 workers up in ${seconds(Date.now() - tBoot)}`);
  check(
    webs.every((w) => w.output.includes("TANKSIDE_WORKERS=0: background jobs are left to")),
    "both web servers say they leave jobs to workers",
  );

  pgOutcome = await trackRuns([`http://127.0.0.1:${portA}`, `http://127.0.0.1:${portB}`], lab);
  workerJobs = workers.map((w) => [...w.output.matchAll(/\[tracking\] job (\d+) \(run \d+\) taken by/g)].map((m) => Number(m[1])));
  const dbJobs = new pg.Client({ connectionString: pgUrl });
  await dbJobs.connect();
  const { rows } = await dbJobs.query<{ run_id: number; id: number; state: string; attempts: number }>(
    "SELECT run_id, id, state, attempts FROM tracking_jobs ORDER BY run_id, id",
  );
  const { rows: positions } = await dbJobs.query<{ run_id: number; n: string; distinct_positions: string; top: number }>(
    "SELECT run_id, count(*) AS n, count(DISTINCT position) AS distinct_positions, max(position) AS top FROM frames GROUP BY run_id",
  );
  const { rows: detections } = await dbJobs.query<{ job_id: number; dupes: string }>(
    "SELECT job_id, count(*) - count(DISTINCT (frame_index, x_px, y_px)) AS dupes FROM detections GROUP BY job_id",
  );
  await dbJobs.end();

  console.log(
    `PostgreSQL: ${RUNS} runs × ${FRAMES} frames uploaded in ${seconds(pgOutcome.uploadMs)}, tracked in ${seconds(pgOutcome.trackMs)}; worker 1 took ${workerJobs[0]!.length} job(s), worker 2 took ${workerJobs[1]!.length}`,
  );
  for (const o of pgOutcome.outcomes)
    console.log(
      `  run ${o.runId}: job ${o.jobId}, tracks ${o.tracks.map((t) => `#${t.number} ${t.points} points`).join(", ")}, verdict ${o.verdict}, progress seen from the other server: ${o.progressSeen.length ? o.progressSeen.join(" → ") : "(finished between polls)"}`,
    );
  const taken = workerJobs.flat().sort((a, b) => a - b);
  check(
    JSON.stringify(taken) === JSON.stringify([...pgOutcome.jobIds].sort((a, b) => a - b)),
    `every job was taken exactly once across the two workers (${taken.length} takes for ${pgOutcome.jobIds.length} jobs)`,
  );
  check(
    workerJobs.every((j) => j.length > 0),
    "both workers tracked runs",
  );
  check(
    rows.length === RUNS && rows.every((r) => r.state === "done" && r.attempts === 1),
    `one job per run, each done at the first attempt (${rows.map((r) => `${r.state}/${r.attempts}`).join(" ")})`,
  );
  check(
    positions.length === RUNS && positions.every((p) => Number(p.n) === FRAMES && Number(p.distinct_positions) === FRAMES && p.top === FRAMES - 1),
    "frames uploaded through both servers at once are numbered 0…N−1 in every run, none twice",
  );
  check(
    detections.every((d) => Number(d.dupes) === 0),
    "no frame's detection stored twice",
  );
  check(
    pgOutcome.outcomes.some((o) => o.progressSeen.some((n) => n > 0 && n < FRAMES)),
    "progress written by a worker was read through the other web server mid-job",
  );
  check(
    pgOutcome.outcomes.every((o) => sameTracks(o, pgOutcome.outcomes[0]!)),
    "all ten runs have the same tracks",
  );
  const objects = await countObjects(fakeS3, bucket, "runs/");
  const onDisk = fs.existsSync(path.join(tmp, "pg-uploads", "runs")) ? fs.readdirSync(path.join(tmp, "pg-uploads", "runs")).length : 0;
  console.log(`PostgreSQL: ${objects} objects under runs/ in the bucket, ${onDisk} run folders on the local disk`);
  check(objects >= RUNS * FRAMES && onDisk === 0, "every frame went to the bucket, none to the web servers' disk");
} finally {
  await Promise.all(procs.map((p) => p.stop()));
  procs.length = 0;
  if (process.env.TWO_PROCESS_KEEP === "1") console.log(`kept the database ${dbName} (TWO_PROCESS_KEEP=1)`);
  else await admin.query(`DROP DATABASE IF EXISTS ${dbName} WITH (FORCE)`).catch((err) => console.error(err));
  await admin.end();
  if (startedCluster) spawnSync(process.execPath, ["scripts/pg-cluster.mjs", "stop"], { cwd: root, stdio: "inherit" });
  await fakeS3.close();
}

// ── SQLite: one web server with its in-process queue ─────────────────────────────────────────
try {
  const dbFile = path.join(tmp, "two-process.sqlite");
  const env = baseEnv(`sqlite:${dbFile}`, path.join(tmp, "sqlite-uploads"));
  const lab = makeLab(env);
  const port = await freePort();
  const server = web("web (SQLite)", port, env);
  procs.push(server);
  await server.waitFor(/\[tankside\] serving on/);
  const outcome = await trackRuns([`http://127.0.0.1:${port}`], lab);
  const rows = await new Promise<{ run_id: number; state: string; attempts: number }[]>((resolve, reject) => {
    const db = new sqlite3.Database(dbFile, (err) => {
      if (err) return reject(err);
      db.all("SELECT run_id, state, attempts FROM tracking_jobs ORDER BY run_id", (e, r) => db.close(() => (e ? reject(e) : resolve(r as never))));
    });
  });
  console.log(
    `SQLite: ${RUNS} runs × ${FRAMES} frames uploaded in ${seconds(outcome.uploadMs)}, tracked in ${seconds(outcome.trackMs)} by the web server's in-process queue`,
  );
  check(rows.length === RUNS && rows.every((r) => r.state === "done" && r.attempts === 1), `SQLite: one job per run, each done at the first attempt`);
  check(
    outcome.outcomes.every((o) => sameTracks(o, outcome.outcomes[0]!)),
    "SQLite: all ten runs have the same tracks",
  );
  check(sameTracks(outcome.outcomes[0]!, pgOutcome!.outcomes[0]!), "the tracks from the two-process PostgreSQL set-up equal the single-process SQLite ones");
  check(outcome.outcomes[0]!.verdict === pgOutcome!.outcomes[0]!.verdict, `the same verdict on both (${outcome.outcomes[0]!.verdict})`);
} finally {
  await Promise.all(procs.map((p) => p.stop()));
}

console.log(`${failures.length ? "FAILED" : "passed"}: ${failures.length} failed check(s); ${seconds(Date.now() - started)} in all`);
process.exit(failures.length ? 1 : 0);

import { test, expect } from "@playwright/test";
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import net from "node:net";
import path from "node:path";
import sharp from "sharp";
import { freshDatabaseUrl, integrityCheck, onPostgres, queryAll } from "../setup/test-database.mjs";

/**
 * Kill -9 in the middle of work. A server of its own (the built app, its own port and folder, not
 * the shared one) takes frame uploads, booking approvals and a tracking job at once, and is killed
 * with SIGKILL while they are in flight. After a restart: the database passes its own integrity
 * check (SQLite's integrity_check, or amcheck on PostgreSQL), every write the client got a 2xx for is there, the tracking job resumes from its stored
 * detections and finishes, and frame files that no row names are gone.
 */

const root = path.resolve(import.meta.dirname, "../..");
const TRACK_FRAMES = 240;
const BOOKINGS = 60;

function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.unref();
    srv.on("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

/** One run of `node server.mjs`, its output kept to read the start-up lines. */
class Server {
  readonly proc: ChildProcess;
  output = "";
  readonly exited: Promise<NodeJS.Signals | number | null>;

  constructor(env: NodeJS.ProcessEnv) {
    this.proc = spawn("node", ["server.mjs"], { cwd: root, env, stdio: ["ignore", "pipe", "pipe"] });
    this.proc.stdout!.on("data", (b: Buffer) => (this.output += b.toString()));
    this.proc.stderr!.on("data", (b: Buffer) => (this.output += b.toString()));
    this.exited = new Promise((resolve) => this.proc.on("exit", (code, signal) => resolve(signal ?? code)));
  }

  /** Resolves when the server says it is serving (after migrations, orphan removal and the job queue have started). */
  ready(): Promise<void> {
    return new Promise((resolve, reject) => {
      const check = () => {
        if (this.output.includes("[tankside] serving on")) {
          this.proc.stdout!.off("data", check);
          resolve();
        }
      };
      this.proc.stdout!.on("data", check);
      this.proc.on("exit", () => reject(new Error(`the server stopped before serving:\n${this.output}`)));
      check();
    });
  }
}

/** Every file under uploads/runs/, as "runId/name". */
function runFiles(uploads: string) {
  const dir = path.join(uploads, "runs");
  if (!fs.existsSync(dir)) return [];
  return fs.readdirSync(dir).flatMap((run) => fs.readdirSync(path.join(dir, run)).map((name) => `${run}/${name}`));
}

test("a server killed with SIGKILL mid-write restarts with every acknowledged write, a resumed tracking job and no orphan files", async ({ request }) => {
  test.setTimeout(600_000);
  const port = await freePort();
  const base = `http://127.0.0.1:${port}`;
  const tmp = path.join(root, "tests/.tmp", `crash-${port}`);
  fs.rmSync(tmp, { recursive: true, force: true });
  fs.mkdirSync(path.join(tmp, "uploads"), { recursive: true });
  const databaseUrl = await freshDatabaseUrl(`crash_${port}`, tmp);
  const uploads = path.join(tmp, "uploads");
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    NODE_ENV: "production",
    TANKSIDE_FAKE_MAIL: "1",
    PORT: String(port),
    HOST: "127.0.0.1",
    DATABASE_URL: databaseUrl,
    UPLOADS_DIR: uploads,
    SESSION_SECRET: "crash-test-session-secret-0123456789",
    APP_URL: base,
    TANKSIDE_JOB_LEASE_S: "5",
  };
  delete env.SMTP_URL;

  const made = spawnSync("npx", ["tsx", "tests/setup/crash-lab.ts", String(TRACK_FRAMES), String(BOOKINGS)], { cwd: root, env, encoding: "utf8" });
  expect(made.status, made.stderr).toBe(0);
  const lab = JSON.parse(made.stdout.trim().split("\n").pop()!) as {
    techToken: string;
    managerToken: string;
    trackRunId: number;
    uploadRunId: number;
    bookingIds: number[];
  };
  const tech = { Authorization: `Bearer ${lab.techToken}` };
  const manager = { Authorization: `Bearer ${lab.managerToken}` };
  const images = await Promise.all(
    Array.from({ length: 300 }, (_, i) =>
      sharp({ create: { width: 320, height: 240, channels: 3, background: { r: i % 256, g: Math.floor(i / 256) * 40, b: 90 } } })
        .png()
        .toBuffer(),
    ),
  );

  let first: Server | null = new Server(env);
  let second: Server | null = null;
  try {
    await first.ready();

    // ── Work in flight ────────────────────────────────────────────────────────────────
    const started = await request.post(`${base}/api/v1/runs/${lab.trackRunId}/tracking`, { headers: tech });
    expect(started.status()).toBe(202);
    const jobId = (await started.json()).job.id as number;

    /** Writes the server answered with a 2xx before it died: these must survive. */
    const acknowledged = { frames: [] as { id: number; name: string }[], approvals: [] as number[] };
    let killed = false;
    const refusedBeforeKill: string[] = [];
    const uploader = async (worker: number) => {
      for (let i = worker; i < images.length && !killed; i += 3) {
        const name = `frame_${String(i + 1).padStart(3, "0")}.png`;
        try {
          const res = await request.post(`${base}/api/v1/runs/${lab.uploadRunId}/frames`, {
            headers: tech,
            multipart: { file: { name, mimeType: "image/png", buffer: images[i]! } },
          });
          if (res.status() === 201) acknowledged.frames.push({ id: (await res.json()).accepted[0].frameId, name });
          else if (!killed) refusedBeforeKill.push(`${name}: ${res.status()}`);
        } catch {
          // The connection died with the server: not acknowledged.
        }
      }
    };
    const approver = async (worker: number) => {
      for (let i = worker; i < lab.bookingIds.length && !killed; i += 2) {
        const id = lab.bookingIds[i]!;
        try {
          const res = await request.post(`${base}/api/v1/bookings/${id}/approve`, { headers: manager, data: {} });
          if (res.status() === 200) acknowledged.approvals.push(id);
          else if (!killed) refusedBeforeKill.push(`booking ${id}: ${res.status()}`);
        } catch {
          // As above.
        }
      }
    };
    const load = Promise.all([0, 1, 2].map(uploader).concat([0, 1].map(approver)));

    // Kill once the tracking job has stored some of its frames and both kinds of write have landed.
    let framesDoneAtKill = 0;
    await expect
      .poll(
        async () => {
          const job = (await (await request.get(`${base}/api/v1/runs/${lab.trackRunId}/tracking`, { headers: tech })).json()).job;
          framesDoneAtKill = job.framesDone;
          return job.state === "running" && job.framesDone > 0 && acknowledged.frames.length >= 5 && acknowledged.approvals.length >= 5;
        },
        { timeout: 240_000, intervals: [100] },
      )
      .toBe(true);
    killed = true;
    first.proc.kill("SIGKILL");
    expect(await first.exited).toBe("SIGKILL");
    first = null;
    await load;
    expect(refusedBeforeKill).toEqual([]);
    expect(framesDoneAtKill).toBeLessThan(TRACK_FRAMES);

    // ── The file as the crash left it ─────────────────────────────────────────────────
    expect(await integrityCheck(databaseUrl)).toEqual(["ok"]);
    // A file left by an upload whose row never committed. The start-up cleanup spares files younger
    // than ORPHAN_MIN_AGE_MS (they may belong to an upload still committing), so everything the
    // killed server left is dated back past that, as if the restart came later.
    const planted = path.join(uploads, "runs", String(lab.uploadRunId), "left-by-a-crash.png");
    fs.writeFileSync(planted, images[0]!);
    const past = new Date(Date.now() - 11 * 60_000);
    for (const f of runFiles(uploads)) fs.utimesSync(path.join(uploads, "runs", f), past, past);

    // ── Restart ───────────────────────────────────────────────────────────────────────
    second = new Server(env);
    await second.ready();
    const removed = Number(/unreferenced upload files removed: (\d+)/.exec(second.output)?.[1]);
    expect(removed).toBeGreaterThanOrEqual(1);
    expect(fs.existsSync(planted)).toBe(false);

    const listed = (await (await request.get(`${base}/api/v1/runs/${lab.uploadRunId}/frames`, { headers: tech })).json()) as {
      frameCount: number;
      frames: { id: number; name: string }[];
    };
    const stored = new Map(listed.frames.map((f) => [f.id, f.name]));
    expect(acknowledged.frames.filter((f) => stored.get(f.id) !== f.name)).toEqual([]);
    expect(listed.frames.map((f) => f.name)).toEqual([...listed.frames.map((f) => f.name)].sort());

    const approvedNow = await Promise.all(
      acknowledged.approvals.map(async (id) => (await (await request.get(`${base}/api/v1/bookings/${id}`, { headers: manager })).json()).state as string),
    );
    expect(approvedNow.filter((s) => s !== "approved")).toEqual([]);

    // The same job goes back in the queue, picks up where its stored detections end and finishes. On
    // SQLite at start; on PostgreSQL once the killed server's lease on it has run out (5 s here,
    // TANKSIDE_JOB_LEASE_S above; 30 s by default), since a running job there may belong to another live worker.
    if (onPostgres) {
      await expect
        .poll(() => second!.output, { timeout: 120_000, intervals: [500] })
        .toMatch(new RegExp(`\\[tracking\\] (resuming 1 interrupted job\\(s\\)|taken back from a worker that stopped answering: job\\(s\\) ${jobId}\\b)`));
    } else {
      expect(second.output).toContain("[tracking] resuming 1 interrupted job(s)");
    }
    await expect
      .poll(async () => (await (await request.get(`${base}/api/v1/runs/${lab.trackRunId}/tracking`, { headers: tech })).json()).job, {
        timeout: 300_000,
        intervals: [500],
      })
      .toMatchObject({ id: jobId, state: "done", framesDone: TRACK_FRAMES });
    const tracked = await (await request.get(`${base}/api/v1/runs/${lab.trackRunId}/tracking`, { headers: tech })).json();
    expect(tracked.tracks.length).toBeGreaterThan(0);

    // ── Mail queued before the kill ───────────────────────────────────────────────────
    // Each approval acknowledged before the kill queued its requester's message in its own
    // transaction; the restarted server's sender delivers every one (a message cut off mid-send
    // waits for its 2-minute lease to run out, so allow for that).
    const approvalMailed = async () => {
      const inbox = (await (await request.get(`${base}/api/v1/mail`, { headers: manager })).json()) as { subject: string; text: string }[];
      return acknowledged.approvals.filter(
        (id) => !inbox.some((m) => m.subject.startsWith("Booking approved:") && new RegExp(`/bookings/${id}(\\D|$)`).test(m.text)),
      );
    };
    await expect.poll(approvalMailed, { timeout: 200_000, intervals: [1000] }).toEqual([]);

    second.proc.kill("SIGTERM");
    await second.exited;
    second = null;

    // ── After a clean stop ────────────────────────────────────────────────────────────
    expect(await integrityCheck(databaseUrl)).toEqual(["ok"]);
    const [job] = (await queryAll(databaseUrl, `SELECT attempts, state FROM tracking_jobs WHERE id = ${jobId}`)) as { attempts: number; state: string }[];
    expect(job).toEqual({ attempts: 2, state: "done" });
    const rows = (await queryAll(databaseUrl, "SELECT run_id, stored_name, thumb_name FROM frames")) as {
      run_id: number;
      stored_name: string;
      thumb_name: string | null;
    }[];
    const named = new Set(rows.flatMap((r) => [`${r.run_id}/${r.stored_name}`, ...(r.thumb_name ? [`${r.run_id}/${r.thumb_name}`] : [])]));
    expect(runFiles(uploads).filter((f) => !named.has(f))).toEqual([]);
    expect([...named].filter((f) => !fs.existsSync(path.join(uploads, "runs", f)))).toEqual([]);
    console.log(
      JSON.stringify({
        crash: {
          framesAcknowledged: acknowledged.frames.length,
          framesStored: listed.frameCount,
          approvalsAcknowledged: acknowledged.approvals.length,
          trackingFramesDoneAtKill: framesDoneAtKill,
          orphanFilesRemoved: removed,
        },
      }),
    );
    fs.rmSync(tmp, { recursive: true, force: true });
  } finally {
    first?.proc.kill("SIGKILL");
    second?.proc.kill("SIGKILL");
  }
});

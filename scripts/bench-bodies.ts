// Starts the built server (npm run build first) on its own port and database, sends an anonymous
// 300 MB POST to /sign-in and a 450 MB chunked upload to the frames API, samples the server's
// resident memory (VmRSS) throughout, and prints one JSON line. Targets: each refused with 413
// within 1 s and with under 50 MB of added resident memory. The upload may legitimately be
// 400 MiB, so its 413 cannot come before that much has arrived: secondsAfterLimitSent is the time
// from the client handing over the byte past the limit to the answer.
import { spawn, type ChildProcess } from "node:child_process";
import fs from "node:fs";
import http from "node:http";
import path from "node:path";

const root = path.resolve(import.meta.dirname, "..");
const port = Number(process.env.BENCH_PORT ?? 3224);
const tmp = path.join(root, "tests/.tmp", `bench-bodies-${port}`);
fs.rmSync(tmp, { recursive: true, force: true });
fs.mkdirSync(path.join(tmp, "uploads"), { recursive: true });

const env: NodeJS.ProcessEnv = { ...process.env };
delete env.SMTP_URL;
Object.assign(env, {
  NODE_ENV: "production",
  TANKSIDE_FAKE_MAIL: "1",
  PORT: String(port),
  HOST: "127.0.0.1",
  DATABASE_URL: `sqlite:${path.join(tmp, "bench.sqlite")}`,
  UPLOADS_DIR: path.join(tmp, "uploads"),
  SESSION_SECRET: "bench-bodies-session-secret-0123456789",
  APP_URL: `http://127.0.0.1:${port}`,
});

const MB = 1_000_000;

/** A technician, a draft run and an API token for them, written before the server opens the file. */
async function seed() {
  Object.assign(process.env, { DATABASE_URL: env.DATABASE_URL, UPLOADS_DIR: env.UPLOADS_DIR, SESSION_SECRET: env.SESSION_SECRET });
  const { sequelize } = await import("../app/.server/db");
  const { smallLab } = await import("../app/.server/test-support");
  const { createRun } = await import("../app/.server/runs/service");
  const { createApiToken } = await import("../app/.server/auth/api-tokens");
  const lab = await smallLab();
  const run = await createRun(lab.runInput({ purpose: "Body limit benchmark" }), lab.tech);
  const { token } = await createApiToken(lab.tech.id, "bench-bodies");
  await sequelize.close();
  return { runId: run.id, token };
}

function startServer(): Promise<ChildProcess> {
  return new Promise((resolve, reject) => {
    const server = spawn("node", ["server.mjs"], { cwd: root, env, stdio: ["ignore", "pipe", "inherit"] });
    server.stdout.setEncoding("utf8");
    server.stdout.on("data", (text: string) => {
      if (text.includes("serving on")) resolve(server);
    });
    server.on("exit", (code) => reject(new Error(`the server stopped (${code}) before it listened`)));
  });
}

function rssMb(pid: number) {
  const status = fs.readFileSync(`/proc/${pid}/status`, "utf8");
  const kb = Number(/VmRSS:\s+(\d+)/.exec(status)?.[1] ?? NaN);
  return (kb * 1024) / MB;
}

/**
 * Streams a body of `total` bytes (chunked, no Content-Length) as fast as the socket takes it and
 * stops once an answer arrives. The server's RSS is sampled every 5 ms meanwhile.
 */
function send(pid: number, opts: { path: string; headers: Record<string, string>; head: string; total: number; tail: string; limitBytes: number }) {
  return new Promise<{
    status: number;
    secondsTo413: number;
    secondsAfterLimitSent: number;
    sentMb: number;
    peakRssIncreaseMb: number;
    rssBeforeMb: number;
    rssAfterMb: number;
    answer: string;
  }>((resolve, reject) => {
    const before = rssMb(pid);
    let peak = before;
    const sampler = setInterval(() => (peak = Math.max(peak, rssMb(pid))), 5);
    const block = Buffer.alloc(256 * 1024, 0x61);
    let sent = 0;
    let answered = false;
    const started = performance.now();
    // When the client had handed the byte past the limit to the socket: what is left is the refusal itself.
    let limitSentAt = Number.NaN;
    const req = http.request({ host: "127.0.0.1", port, path: opts.path, method: "POST", headers: opts.headers });
    req.on("response", (res) => {
      answered = true;
      const answeredAt = performance.now();
      const seconds = (answeredAt - started) / 1000;
      let answer = "";
      res.setEncoding("utf8");
      res.on("data", (c) => (answer += c));
      res.on("end", () => {
        req.destroy();
        // A moment for the server to drop what it held, sampled as it happens.
        setTimeout(() => {
          clearInterval(sampler);
          peak = Math.max(peak, rssMb(pid));
          resolve({
            status: res.statusCode ?? 0,
            secondsTo413: Number(seconds.toFixed(3)),
            secondsAfterLimitSent: Number(((answeredAt - limitSentAt) / 1000).toFixed(3)),
            sentMb: Number((sent / MB).toFixed(1)),
            peakRssIncreaseMb: Number((peak - before).toFixed(1)),
            rssBeforeMb: Number(before.toFixed(1)),
            rssAfterMb: Number(rssMb(pid).toFixed(1)),
            answer: answer.slice(0, 200),
          });
        }, 500);
      });
    });
    req.on("error", (err) => {
      if (!answered) {
        clearInterval(sampler);
        reject(err);
      }
    });
    req.write(opts.head);
    sent += opts.head.length;
    const pump = () => {
      while (!answered && sent < opts.total) {
        const n = Math.min(block.length, opts.total - sent);
        sent += n;
        if (sent > opts.limitBytes && Number.isNaN(limitSentAt)) limitSentAt = performance.now();
        if (!req.write(n === block.length ? block : block.subarray(0, n))) return void req.once("drain", pump);
      }
      if (!answered) req.end(opts.tail);
    };
    pump();
  });
}

async function main() {
  if (!fs.existsSync(path.join(root, "build/server/index.js"))) throw new Error("Build first: npm run build");
  const { runId, token } = await seed();
  const server = await startServer();
  const pid = server.pid!;
  try {
    const signIn = await send(pid, {
      path: "/sign-in",
      headers: { "Content-Type": "application/x-www-form-urlencoded" },
      head: "email=tech%40tankside.example&password=",
      total: 300 * MB,
      tail: "",
      limitBytes: 64 * 1024,
    });
    const boundary = "----tankside-bench-4b1d";
    const upload = await send(pid, {
      path: `/api/v1/runs/${runId}/frames?kind=zip`,
      headers: { "Content-Type": `multipart/form-data; boundary=${boundary}`, Authorization: `Bearer ${token}` },
      head: `--${boundary}\r\nContent-Disposition: form-data; name="file"; filename="stack.zip"\r\nContent-Type: application/zip\r\n\r\nPK\u0003\u0004`,
      total: 450 * MB,
      tail: `\r\n--${boundary}--\r\n`,
      limitBytes: 400 * 1024 * 1024 + 64 * 1024,
    });
    const stagingDir = path.join(tmp, "uploads", "tmp");
    const staged = fs.existsSync(stagingDir) ? fs.readdirSync(stagingDir).length : 0;
    console.log(JSON.stringify({ signIn300MB: signIn, chunkedUpload450MB: upload, stagedFilesLeft: staged }));
  } finally {
    server.kill("SIGTERM");
  }
}

main().catch((err) => {
  console.error(err);
  process.exit(1);
});

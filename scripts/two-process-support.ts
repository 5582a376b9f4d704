// The processes, settings and API calls of `npm run test:two-process` (scripts/two-process.ts): a
// Tankside process started and watched through its output, the environment each gets, the lab made
// through the API's own seeding script, objects counted in the fake S3 bucket, and a small API client.
import { spawn, spawnSync, type ChildProcess } from "node:child_process";
import net from "node:net";
import path from "node:path";
import { ListObjectsV2Command, S3Client } from "@aws-sdk/client-s3";
import { FAKE_S3_ACCESS_KEY, FAKE_S3_SECRET_KEY, type FakeS3 } from "../tests/setup/fake-s3";
import { serverNodeFlags } from "./node-flags.mjs";

export const root = path.resolve(import.meta.dirname, "..");

export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const srv = net.createServer();
    srv.on("error", reject);
    srv.listen(0, "127.0.0.1", () => {
      const { port } = srv.address() as net.AddressInfo;
      srv.close(() => resolve(port));
    });
  });
}

export class Proc {
  readonly child: ChildProcess;
  output = "";
  readonly exited: Promise<number | string | null>;
  constructor(
    readonly label: string,
    args: string[],
    env: NodeJS.ProcessEnv,
  ) {
    this.child = spawn(process.execPath, args, { cwd: root, env, stdio: ["ignore", "pipe", "pipe"] });
    this.child.stdout!.on("data", (b: Buffer) => (this.output += b.toString()));
    this.child.stderr!.on("data", (b: Buffer) => (this.output += b.toString()));
    this.exited = new Promise((resolve) => this.child.on("exit", (code, signal) => resolve(signal ?? code)));
  }
  async waitFor(pattern: RegExp, timeoutMs = 120_000) {
    const t0 = Date.now();
    for (;;) {
      const m = pattern.exec(this.output);
      if (m) return m;
      if (this.child.exitCode !== null || this.child.signalCode !== null) throw new Error(`${this.label} stopped:\n${this.output}`);
      if (Date.now() - t0 > timeoutMs) throw new Error(`${this.label}: no ${pattern} after ${timeoutMs} ms:\n${this.output}`);
      await new Promise((r) => setTimeout(r, 100));
    }
  }
  async stop() {
    if (this.child.exitCode === null && this.child.signalCode === null) this.child.kill("SIGTERM");
    return this.exited;
  }
}

export const web = (label: string, port: number, env: NodeJS.ProcessEnv) =>
  new Proc(label, [...serverNodeFlags, "server.mjs"], { ...env, PORT: String(port), HOST: "127.0.0.1", APP_URL: `http://127.0.0.1:${port}` });
// What `npm run worker` runs (tsx app/.server/worker.ts), as one process so it stops with one signal.
export const worker = (label: string, env: NodeJS.ProcessEnv) => new Proc(label, [...serverNodeFlags, "--import", "tsx", "app/.server/worker.ts"], env);

/** Objects under a prefix of the fake server's bucket, counted through the S3 API. */
export async function countObjects(s3: FakeS3, bucketName: string, prefix: string) {
  const client = new S3Client({
    endpoint: s3.endpoint,
    region: "us-east-1",
    forcePathStyle: true,
    credentials: { accessKeyId: FAKE_S3_ACCESS_KEY, secretAccessKey: FAKE_S3_SECRET_KEY },
  });
  let count = 0;
  let token: string | undefined;
  try {
    do {
      const page = await client.send(new ListObjectsV2Command({ Bucket: bucketName, Prefix: prefix, ContinuationToken: token }));
      count += page.KeyCount ?? 0;
      token = page.IsTruncated ? page.NextContinuationToken : undefined;
    } while (token);
  } finally {
    client.destroy();
  }
  return count;
}

export function baseEnv(databaseUrl: string, uploads: string): NodeJS.ProcessEnv {
  const env: NodeJS.ProcessEnv = {
    ...process.env,
    NODE_ENV: "production",
    TANKSIDE_FAKE_MAIL: "1",
    SESSION_SECRET: "two-process-session-secret-0123456789",
    DATABASE_URL: databaseUrl,
    UPLOADS_DIR: uploads,
  };
  delete env.SMTP_URL;
  delete env.TANKSIDE_WORKERS;
  delete env.TEST_DATABASE_URL;
  return env;
}

export function makeLab(env: NodeJS.ProcessEnv) {
  const made = spawnSync(process.execPath, ["--import", "tsx", "scripts/two-process-lab.ts"], { cwd: root, env, encoding: "utf8" });
  if (made.status !== 0) throw new Error(`the lab could not be made:\n${made.stdout}\n${made.stderr}`);
  return JSON.parse(made.stdout.trim().split("\n").pop()!) as {
    techToken: string;
    email: string;
    password: string;
    tableId: number;
    tankId: number;
    cameraId: number;
  };
}

// ── The API client ──
export type Lab = ReturnType<typeof makeLab>;
export async function api(base: string, token: string, method: string, url: string, body?: BodyInit, type?: string) {
  const res = await fetch(`${base}${url}`, {
    method,
    body,
    redirect: "manual",
    headers: { Authorization: `Bearer ${token}`, ...(type ? { "Content-Type": type } : {}) },
  });
  return res;
}
export async function json<T>(res: Response, expected: number[], what: string): Promise<T> {
  if (!expected.includes(res.status)) throw new Error(`${what}: HTTP ${res.status} ${await res.text()}`);
  return (await res.json()) as T;
}

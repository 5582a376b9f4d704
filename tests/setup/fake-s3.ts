/**
 * A fake S3 server for tests: s3rver (from npm) on 127.0.0.1 at a free port, in a child process
 * (see fake-s3-server.mjs for why), keeping its objects in a fresh temporary folder, with the
 * access key it knows (S3RVER / S3RVER). Buckets are made through the real S3 API, as an
 * administrator would.
 */
import { spawn } from "node:child_process";
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import crypto from "node:crypto";
import readline from "node:readline";
import { CreateBucketCommand, S3Client } from "@aws-sdk/client-s3";

export const FAKE_S3_ACCESS_KEY = "S3RVER";
export const FAKE_S3_SECRET_KEY = "S3RVER";

export interface FakeS3Address {
  endpoint: string;
}

export interface FakeS3 extends FakeS3Address {
  dir: string;
  close(): Promise<void>;
}

// The SDK's notice that later releases need Node 22 would otherwise fill the test output.
process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= "true";

const serverScript = path.join(import.meta.dirname, "fake-s3-server.mjs");

export async function startFakeS3(): Promise<FakeS3> {
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), "tankside-fake-s3-"));
  const child = spawn(process.execPath, ["--openssl-legacy-provider", serverScript, dir], { stdio: ["pipe", "pipe", "inherit"] });
  const exited = new Promise<number | null>((resolve) => child.once("exit", (code) => resolve(code)));
  const port = await new Promise<number>((resolve, reject) => {
    const lines = readline.createInterface({ input: child.stdout });
    lines.once("line", (line) => resolve((JSON.parse(line) as { port: number }).port));
    child.once("error", reject);
    void exited.then((code) => reject(new Error(`the fake S3 server stopped before it listened (exit ${code})`)));
  });
  return {
    endpoint: `http://127.0.0.1:${port}`,
    dir,
    async close() {
      child.stdin.end();
      await exited;
      await fs.rm(dir, { recursive: true, force: true });
    },
  };
}

function adminClient(s3: FakeS3Address) {
  return new S3Client({
    endpoint: s3.endpoint,
    region: "us-east-1",
    forcePathStyle: true,
    credentials: { accessKeyId: FAKE_S3_ACCESS_KEY, secretAccessKey: FAKE_S3_SECRET_KEY },
  });
}

export async function createBucket(s3: FakeS3Address, name = `tankside-t-${crypto.randomUUID().slice(0, 8)}`) {
  const client = adminClient(s3);
  try {
    await client.send(new CreateBucketCommand({ Bucket: name }));
  } finally {
    client.destroy();
  }
  return name;
}

/** The settings that point Tankside at a bucket of the fake server. */
export function s3Env(s3: FakeS3Address, bucket: string): Record<string, string> {
  return {
    S3_BUCKET: bucket,
    S3_ENDPOINT: s3.endpoint,
    S3_REGION: "us-east-1",
    S3_FORCE_PATH_STYLE: "1",
    AWS_ACCESS_KEY_ID: FAKE_S3_ACCESS_KEY,
    AWS_SECRET_ACCESS_KEY: FAKE_S3_SECRET_KEY,
  };
}

/** The S3 settings Tankside reads, so a test can set and later restore them. */
export const s3SettingNames = ["S3_BUCKET", "S3_ENDPOINT", "S3_REGION", "S3_FORCE_PATH_STYLE", "AWS_ACCESS_KEY_ID", "AWS_SECRET_ACCESS_KEY"] as const;

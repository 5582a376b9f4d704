/**
 * A fake S3 server for tests: s3rver (from npm) on 127.0.0.1 at a free port, keeping its objects in
 * a fresh temporary folder, with the access key it knows (S3RVER / S3RVER). Buckets are made
 * through the real S3 API, as an administrator would.
 */
import fs from "node:fs/promises";
import os from "node:os";
import path from "node:path";
import crypto from "node:crypto";
import S3rver from "s3rver";
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

export async function startFakeS3(): Promise<FakeS3> {
  const dir = await fs.mkdtemp(path.join(os.tmpdir(), "tankside-fake-s3-"));
  const server = new S3rver({ address: "127.0.0.1", port: 0, directory: dir, silent: true });
  const { port } = await server.run();
  return {
    endpoint: `http://127.0.0.1:${port}`,
    dir,
    async close() {
      await server.close();
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

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { spawn } from "node:child_process";
import http from "node:http";
import net from "node:net";
import os from "node:os";
import path from "node:path";
import crypto from "node:crypto";
import { createBucket, s3Env, startFakeS3, type FakeS3 } from "../../../tests/setup/fake-s3";
import { S3Store } from "./index";
import { STARTUP_TRIES, classifyS3Error } from "./s3";

/**
 * Bad S3 settings stop the start with one line naming the setting: checked on the store, and
 * through boot() itself in a fresh process, as `npm start` would meet them.
 */
let s3: FakeS3;
let bucket: string;
beforeAll(async () => {
  s3 = await startFakeS3();
  bucket = await createBucket(s3);
});
afterAll(async () => {
  await s3?.close();
});

/** A port on 127.0.0.1 that nothing listens on: taken, then let go. */
async function closedPort() {
  const server = net.createServer();
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  const port = (server.address() as net.AddressInfo).port;
  await new Promise<void>((resolve) => server.close(() => resolve()));
  return port;
}

/** Runs boot() in a new Node process with these settings; resolves with its exit code and output. */
function bootWith(settings: Record<string, string>): Promise<{ code: number | null; stdout: string; stderr: string }> {
  const env: NodeJS.ProcessEnv = {
    PATH: process.env.PATH,
    HOME: process.env.HOME,
    DATABASE_URL: `sqlite:${path.join(os.tmpdir(), `tankside-boot-check-${crypto.randomUUID()}.sqlite`)}`,
    UPLOADS_DIR: path.join(os.tmpdir(), `tankside-boot-check-uploads-${crypto.randomUUID()}`),
    SESSION_SECRET: "boot-check-session-secret-0123456789",
    ...settings,
  };
  const child = spawn(
    process.execPath,
    ["--import", "tsx", "--input-type=module", "-e", "const { boot } = await import('./app/.server/boot.ts'); await boot(); process.exit(0);"],
    {
      cwd: process.cwd(),
      env,
      stdio: ["ignore", "pipe", "pipe"],
    },
  );
  let stdout = "";
  let stderr = "";
  child.stdout.on("data", (d) => (stdout += d));
  child.stderr.on("data", (d) => (stderr += d));
  return new Promise((resolve) => child.on("close", (code) => resolve({ code, stdout, stderr })));
}

const store = (over: Partial<ConstructorParameters<typeof S3Store>[0]> = {}) =>
  new S3Store({ bucket, endpoint: s3.endpoint, region: "us-east-1", forcePathStyle: true, ...over });

describe("S3 settings checked at start", () => {
  it("passes a bucket that exists with good credentials", async () => {
    process.env.AWS_ACCESS_KEY_ID = "S3RVER";
    process.env.AWS_SECRET_ACCESS_KEY = "S3RVER";
    expect(await store().startupProblem()).toBeNull();
  });

  it("names a bucket that does not exist, bad credentials and an endpoint that does not answer", async () => {
    process.env.AWS_ACCESS_KEY_ID = "S3RVER";
    process.env.AWS_SECRET_ACCESS_KEY = "S3RVER";
    expect(await store({ bucket: "no-such-bucket" }).startupProblem()).toBe(
      `Tankside will not start: S3 bucket 'no-such-bucket' at S3_ENDPOINT ${s3.endpoint} does not exist (NoSuchBucket: The specified bucket does not exist). Create the bucket, or set S3_BUCKET to one that exists.`,
    );
    process.env.AWS_ACCESS_KEY_ID = "NOT-A-KEY";
    expect(await store().startupProblem()).toMatch(
      new RegExp(
        `^Tankside will not start: S3 bucket '${bucket}' at S3_ENDPOINT ${s3.endpoint} refused the credentials \\(InvalidAccessKeyId: .+\\)\\. Check AWS_ACCESS_KEY_ID and AWS_SECRET_ACCESS_KEY\\.$`,
      ),
    );
    process.env.AWS_ACCESS_KEY_ID = "S3RVER";
    const port = await closedPort();
    expect(await store({ endpoint: `http://127.0.0.1:${port}` }).startupProblem()).toBe(
      `Tankside will not start: S3_ENDPOINT http://127.0.0.1:${port} is not reachable (ECONNREFUSED: connect ECONNREFUSED 127.0.0.1:${port}), so S3 bucket '${bucket}' cannot be used. Check S3_ENDPOINT.`,
    );
  });
});

/**
 * An endpoint in front of the fake S3 server whose first `failing` requests are answered as S3
 * answers a passing fault: 500 with an InternalError body. The rest are passed through.
 */
async function flakyEndpoint(failing: number) {
  const target = new URL(s3.endpoint);
  let seen = 0;
  const server = http.createServer((req, res) => {
    seen++;
    if (seen <= failing) {
      req.resume();
      res.writeHead(500, { "content-type": "application/xml" });
      res.end(
        `<?xml version="1.0" encoding="UTF-8"?><Error><Code>InternalError</Code><Message>We encountered an internal error. Please try again.</Message></Error>`,
      );
      return;
    }
    const upstream = http.request({ host: target.hostname, port: target.port, path: req.url, method: req.method, headers: req.headers }, (answer) => {
      res.writeHead(answer.statusCode ?? 502, answer.headers);
      answer.pipe(res);
    });
    req.pipe(upstream);
  });
  await new Promise<void>((resolve) => server.listen(0, "127.0.0.1", resolve));
  return {
    endpoint: `http://127.0.0.1:${(server.address() as net.AddressInfo).port}`,
    requests: () => seen,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  };
}

describe("a server error at start is asked again, a little later", () => {
  it("passes when the bucket answers 500 twice and then properly; the list, the write and the removal all arrive", async () => {
    process.env.AWS_ACCESS_KEY_ID = "S3RVER";
    process.env.AWS_SECRET_ACCESS_KEY = "S3RVER";
    const flaky = await flakyEndpoint(STARTUP_TRIES - 1);
    try {
      expect(await store({ endpoint: flaky.endpoint }).startupProblem()).toBeNull();
      expect(flaky.requests()).toBe(STARTUP_TRIES - 1 + 3);
    } finally {
      await flaky.close();
    }
  });

  it("gives up with the server's own words after three answers of 500", async () => {
    process.env.AWS_ACCESS_KEY_ID = "S3RVER";
    process.env.AWS_SECRET_ACCESS_KEY = "S3RVER";
    const flaky = await flakyEndpoint(Number.POSITIVE_INFINITY);
    try {
      expect(await store({ endpoint: flaky.endpoint }).startupProblem()).toBe(
        `Tankside will not start: S3 bucket '${bucket}' at S3_ENDPOINT ${flaky.endpoint} cannot be used (InternalError: We encountered an internal error. Please try again.). Check S3_BUCKET, S3_ENDPOINT, S3_REGION and the AWS credentials.`,
      );
      expect(flaky.requests()).toBe(STARTUP_TRIES);
    } finally {
      await flaky.close();
    }
  });
});

describe("S3 errors sorted by what a person must fix", () => {
  // Shapes as the SDK builds them from S3's XML error answers (name = the error code, the HTTP
  // status in $metadata), and as Node reports a socket error.
  it.each([
    [{ name: "SignatureDoesNotMatch", $metadata: { httpStatusCode: 403 } }, "credentials"],
    [{ name: "InvalidAccessKeyId", $metadata: { httpStatusCode: 403 } }, "credentials"],
    [{ name: "ExpiredToken", $metadata: { httpStatusCode: 400 } }, "credentials"],
    [{ name: "AccessDenied", $metadata: { httpStatusCode: 403 } }, "denied"],
    [{ name: "NoSuchBucket", $metadata: { httpStatusCode: 404 } }, "no_bucket"],
    [{ name: "NoSuchKey", $metadata: { httpStatusCode: 404 } }, "missing"],
    [{ name: "NotFound", $metadata: { httpStatusCode: 404 } }, "missing"],
    [{ name: "CredentialsProviderError" }, "no_credentials"],
    [Object.assign(new Error("getaddrinfo ENOTFOUND s3.lab.example"), { code: "ENOTFOUND" }), "unreachable"],
    [{ name: "TimeoutError" }, "unreachable"],
    [{ name: "InternalError", $metadata: { httpStatusCode: 500 } }, "other"],
  ])("%o is %s", (err, kind) => {
    expect(classifyS3Error(err)).toBe(kind);
  });
});

describe("boot() with bad S3 settings", () => {
  const oneLine = (stderr: string) => stderr.trimEnd().split("\n");

  it("refuses a missing bucket with one line on stderr and exit status 1, before touching the database", async () => {
    const out = await bootWith(s3Env(s3, "missing-bucket"));
    expect(out.code).toBe(1);
    expect(oneLine(out.stderr)).toEqual([
      `Tankside will not start: S3 bucket 'missing-bucket' at S3_ENDPOINT ${s3.endpoint} does not exist (NoSuchBucket: The specified bucket does not exist). Create the bucket, or set S3_BUCKET to one that exists.`,
    ]);
    expect(out.stdout).not.toMatch(/migrations applied/);
  });

  // s3rver checks the access key id but does not verify SigV4 signatures, so an unknown key id is
  // the bad credential it can refuse; a wrong secret (SignatureDoesNotMatch) is classified below.
  it("refuses bad credentials with one line naming the settings", async () => {
    const out = await bootWith({ ...s3Env(s3, bucket), AWS_ACCESS_KEY_ID: "NOT-A-KEY" });
    expect(out.code).toBe(1);
    expect(oneLine(out.stderr)).toEqual([
      `Tankside will not start: S3 bucket '${bucket}' at S3_ENDPOINT ${s3.endpoint} refused the credentials (InvalidAccessKeyId: The AWS Access Key Id you provided does not exist in our records.). Check AWS_ACCESS_KEY_ID and AWS_SECRET_ACCESS_KEY.`,
    ]);
  });

  it("refuses an unreachable endpoint, and S3_ENDPOINT without S3_BUCKET", async () => {
    const port = await closedPort();
    const down = await bootWith({ ...s3Env(s3, bucket), S3_ENDPOINT: `http://127.0.0.1:${port}` });
    expect(down.code).toBe(1);
    expect(oneLine(down.stderr)).toEqual([
      `Tankside will not start: S3_ENDPOINT http://127.0.0.1:${port} is not reachable (ECONNREFUSED: connect ECONNREFUSED 127.0.0.1:${port}), so S3 bucket '${bucket}' cannot be used. Check S3_ENDPOINT.`,
    ]);
    const stray = await bootWith({ S3_ENDPOINT: s3.endpoint });
    expect(stray.code).toBe(1);
    expect(oneLine(stray.stderr)).toHaveLength(1);
    expect(stray.stderr).toMatch(/^Tankside will not start: S3_ENDPOINT is set but S3_BUCKET is not\. Set S3_BUCKET/);
  });

  it("starts with a good bucket and says where the files are kept", async () => {
    const out = await bootWith(s3Env(s3, bucket));
    expect(out.stderr).toBe("");
    expect(out.code).toBe(0);
    expect(out.stdout).toContain(`[tankside] frames and attachments are kept in S3 bucket '${bucket}' at S3_ENDPOINT ${s3.endpoint}`);
  });
});

import crypto from "node:crypto";
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import type { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import {
  DeleteObjectCommand,
  GetObjectCommand,
  HeadObjectCommand,
  ListObjectsV2Command,
  PutObjectCommand,
  S3Client,
  type S3ClientConfig,
} from "@aws-sdk/client-s3";
import { assertKey, assertPrefix } from "./keys";
import type { ScratchDir } from "./scratch";
import { MissingObjectError, StorageUnavailableError, type ObjectInfo, type ObjectStore, type OpenedObject } from "./types";

export interface S3Settings {
  bucket: string;
  /** S3_ENDPOINT; null for AWS itself. */
  endpoint: string | null;
  region: string;
  forcePathStyle: boolean;
}

/** One line: an S3 error's code and message without newlines, at most 200 characters. */
function said(err: unknown) {
  const e = err as { name?: string; Code?: string; code?: string; message?: string; errors?: { message?: string }[] };
  const code = e?.Code ?? (e?.name && e.name !== "Error" ? e.name : e?.code);
  // Node gives an AggregateError with an empty message when every address of a host refuses.
  const message = e?.message || e?.errors?.map((x) => x.message).join("; ") || String(err);
  const text = (code && !message.startsWith(code) ? `${code}: ${message}` : message).replace(/\s+/g, " ").trim();
  return text.length > 200 ? `${text.slice(0, 197)}...` : text;
}

const unreachableCodes = new Set([
  "ECONNREFUSED",
  "ENOTFOUND",
  "EAI_AGAIN",
  "ECONNRESET",
  "ETIMEDOUT",
  "EHOSTUNREACH",
  "ENETUNREACH",
  "EPIPE",
  "TimeoutError",
  "RequestTimeout",
]);
const credentialCodes = new Set([
  "InvalidAccessKeyId",
  "SignatureDoesNotMatch",
  "InvalidToken",
  "ExpiredToken",
  "TokenRefreshRequired",
  "AuthorizationHeaderMalformed",
  "InvalidClientTokenId",
  "UnrecognizedClientException",
]);

export type S3Failure = "missing" | "no_bucket" | "credentials" | "no_credentials" | "denied" | "unreachable" | "other";

/** What kind of failure an error from the SDK is. */
export function classifyS3Error(err: unknown): S3Failure {
  const e = err as { name?: string; Code?: string; code?: string; $metadata?: { httpStatusCode?: number }; errors?: { code?: string }[] };
  const code = e?.Code ?? e?.name ?? "";
  if (code === "NoSuchBucket") return "no_bucket";
  if (code === "NoSuchKey" || code === "NotFound" || e?.$metadata?.httpStatusCode === 404) return "missing";
  if (credentialCodes.has(code)) return "credentials";
  if (code === "CredentialsProviderError") return "no_credentials";
  if (code === "AccessDenied" || e?.$metadata?.httpStatusCode === 403) return "denied";
  const sys = e?.code ?? e?.errors?.[0]?.code ?? "";
  if (unreachableCodes.has(sys) || unreachableCodes.has(code)) return "unreachable";
  return "other";
}

/** The endpoint as it is safe to print: no user or password that someone put in the URL. */
function printable(endpoint: string) {
  const u = new URL(endpoint);
  u.username = "";
  u.password = "";
  return u.toString().replace(/\/$/, "");
}

export function describeS3(settings: S3Settings) {
  return settings.endpoint
    ? `S3 bucket '${settings.bucket}' at S3_ENDPOINT ${printable(settings.endpoint)}`
    : `S3 bucket '${settings.bucket}' in AWS region ${settings.region}`;
}

/** How many times the start-up check asks when the answer is a server error (500 or 503). */
export const STARTUP_TRIES = 3;

function clientConfig(settings: S3Settings, forCheck: boolean): S3ClientConfig {
  return {
    region: settings.region,
    ...(settings.endpoint ? { endpoint: settings.endpoint } : {}),
    forcePathStyle: settings.forcePathStyle,
    // Credentials come from the SDK's default chain: AWS_ACCESS_KEY_ID and AWS_SECRET_ACCESS_KEY,
    // a profile, or the machine's role. Checksums only where an operation demands them: several
    // S3-compatible servers refuse the streamed ("aws-chunked") uploads the SDK makes otherwise,
    // and every frame's sha256 is kept in the database anyway.
    requestChecksumCalculation: "WHEN_REQUIRED",
    responseChecksumValidation: "WHEN_REQUIRED",
    maxAttempts: forCheck ? 1 : 3,
    requestHandler: forCheck
      ? { connectionTimeout: 5_000, requestTimeout: 10_000, throwOnRequestTimeout: true }
      : { connectionTimeout: 5_000, socketTimeout: 60_000 },
  };
}

/** The Body of GetObject in Node is a readable stream (an IncomingMessage with the SDK's helpers). */
function nodeBody(body: unknown): Readable {
  return body as Readable;
}

/**
 * Objects in an S3-compatible bucket. The bucket stays private: everything is read through the
 * server, which checks permissions as for files on disk.
 */
export class S3Store implements ObjectStore {
  readonly kind = "s3" as const;
  readonly where: string;
  private readonly client: S3Client;

  constructor(readonly settings: S3Settings) {
    // The SDK warns once per process, over several lines, that releases after January 2027 will
    // need Node 22. This pinned release runs on Node 20; the warning would break the one-line
    // start-up messages. An explicit setting of the variable is left as it is.
    process.env.AWS_SDK_JS_NODE_VERSION_SUPPORT_WARNING_DISABLED ??= "true";
    this.where = describeS3(settings);
    this.client = new S3Client(clientConfig(settings, false));
  }

  private fail(op: string, key: string, err: unknown): never {
    throw new StorageUnavailableError(`${this.where}: ${op} ${key} failed (${said(err)})`, { cause: err });
  }

  async put(key: string, data: Buffer, contentType?: string) {
    try {
      await this.client.send(
        new PutObjectCommand({ Bucket: this.settings.bucket, Key: assertKey(key), Body: data, ContentLength: data.length, ContentType: contentType }),
      );
    } catch (err) {
      this.fail("writing", key, err);
    }
  }

  async putFile(key: string, file: string, contentType?: string) {
    const { size } = await fsp.stat(file);
    try {
      await this.client.send(
        new PutObjectCommand({
          Bucket: this.settings.bucket,
          Key: assertKey(key),
          Body: fs.createReadStream(file),
          ContentLength: size,
          ContentType: contentType,
        }),
      );
    } catch (err) {
      this.fail("writing", key, err);
    }
    await fsp.rm(file, { force: true });
  }

  async open(key: string): Promise<OpenedObject | null> {
    try {
      const out = await this.client.send(new GetObjectCommand({ Bucket: this.settings.bucket, Key: assertKey(key) }));
      return { body: nodeBody(out.Body), size: out.ContentLength ?? 0 };
    } catch (err) {
      if (classifyS3Error(err) === "missing") return null;
      this.fail("reading", key, err);
    }
  }

  async get(key: string) {
    const opened = await this.open(key);
    if (!opened) return null;
    const chunks: Buffer[] = [];
    try {
      for await (const chunk of opened.body) chunks.push(chunk as Buffer);
    } catch (err) {
      this.fail("reading", key, err);
    }
    return Buffer.concat(chunks);
  }

  async head(key: string): Promise<ObjectInfo | null> {
    try {
      const out = await this.client.send(new HeadObjectCommand({ Bucket: this.settings.bucket, Key: assertKey(key) }));
      return { key, size: out.ContentLength ?? 0, modified: out.LastModified ?? new Date(0) };
    } catch (err) {
      if (classifyS3Error(err) === "missing") return null;
      this.fail("looking up", key, err);
    }
  }

  async delete(key: string) {
    try {
      await this.client.send(new DeleteObjectCommand({ Bucket: this.settings.bucket, Key: assertKey(key) }));
    } catch (err) {
      if (classifyS3Error(err) === "missing") return;
      this.fail("removing", key, err);
    }
  }

  async list(prefix: string): Promise<ObjectInfo[]> {
    assertPrefix(prefix);
    const out: ObjectInfo[] = [];
    let token: string | undefined;
    do {
      let page;
      try {
        page = await this.client.send(new ListObjectsV2Command({ Bucket: this.settings.bucket, Prefix: prefix, ContinuationToken: token }));
      } catch (err) {
        this.fail("listing", prefix, err);
      }
      for (const o of page.Contents ?? []) if (o.Key) out.push({ key: o.Key, size: o.Size ?? 0, modified: o.LastModified ?? new Date(0) });
      token = page.IsTruncated ? page.NextContinuationToken : undefined;
    } while (token);
    return out;
  }

  /** Downloaded into the scratch folder at the key's path, so the file keeps the object's name. */
  async localPath(key: string, scratch: ScratchDir) {
    const file = path.join(await scratch.path(), ...assertKey(key).split("/"));
    await fsp.mkdir(path.dirname(file), { recursive: true });
    const opened = await this.open(key);
    if (!opened) throw new MissingObjectError(key, this.where);
    try {
      await pipeline(opened.body, fs.createWriteStream(file));
    } catch (err) {
      await fsp.rm(file, { force: true });
      this.fail("downloading", key, err);
    }
    return file;
  }

  /**
   * At start: the bucket is listed (it exists, the credentials are good) and a small object is
   * written and removed again (they may write), with short time limits and no retry but for a
   * server error, so a bad setting stops the server in seconds with a line saying which.
   */
  async startupProblem() {
    const client = new S3Client(clientConfig(this.settings, true));
    const where = this.where;
    const line = (err: unknown, doing: "list" | "write") => {
      const why = said(err);
      switch (classifyS3Error(err)) {
        case "no_bucket":
          return `Tankside will not start: ${where} does not exist (${why}). Create the bucket, or set S3_BUCKET to one that exists.`;
        case "missing":
          return `Tankside will not start: ${where} does not exist or cannot be reached as a bucket (${why}). Check S3_BUCKET, S3_ENDPOINT and S3_FORCE_PATH_STYLE.`;
        case "credentials":
          return `Tankside will not start: ${where} refused the credentials (${why}). Check AWS_ACCESS_KEY_ID and AWS_SECRET_ACCESS_KEY.`;
        case "no_credentials":
          return `Tankside will not start: no credentials for ${where} (${why}). Set AWS_ACCESS_KEY_ID and AWS_SECRET_ACCESS_KEY.`;
        case "denied":
          return doing === "list"
            ? `Tankside will not start: ${where} refused to list its objects with these credentials (${why}). Check AWS_ACCESS_KEY_ID and AWS_SECRET_ACCESS_KEY, and that they may list, read, write and delete in the bucket.`
            : `Tankside will not start: ${where} can be listed but not written with these credentials (${why}). Allow them to write and delete objects in the bucket.`;
        case "unreachable":
          return this.settings.endpoint
            ? `Tankside will not start: S3_ENDPOINT ${printable(this.settings.endpoint)} is not reachable (${why}), so S3 bucket '${this.settings.bucket}' cannot be used. Check S3_ENDPOINT.`
            : `Tankside will not start: ${where} is not reachable (${why}). Check S3_REGION and the network.`;
        default:
          return `Tankside will not start: ${where} cannot be used (${why}). Check S3_BUCKET, S3_ENDPOINT, S3_REGION and the AWS credentials.`;
      }
    };
    // An answer of 500 or 503 says "try again" (S3's InternalError and SlowDown): two more tries, a
    // moment apart, before the server gives up. A second process checking the same bucket at the
    // same moment is enough to draw one from some S3-compatible servers. Everything else is
    // answered at once: a wrong setting does not get better by asking again.
    const asking = async <T>(request: () => Promise<T>): Promise<T> => {
      for (let attempt = 1; ; attempt++) {
        try {
          return await request();
        } catch (err) {
          const status = (err as { $metadata?: { httpStatusCode?: number } })?.$metadata?.httpStatusCode ?? 0;
          if (status < 500 || attempt >= STARTUP_TRIES) throw err;
          await new Promise((resolve) => setTimeout(resolve, 250 * attempt));
        }
      }
    };
    try {
      try {
        await asking(() => client.send(new ListObjectsV2Command({ Bucket: this.settings.bucket, MaxKeys: 1, Prefix: "runs/" })));
      } catch (err) {
        return line(err, "list");
      }
      const probe = `tankside-start-check/${crypto.randomUUID()}`;
      try {
        await asking(() => client.send(new PutObjectCommand({ Bucket: this.settings.bucket, Key: probe, Body: Buffer.from("ok"), ContentLength: 2 })));
        await asking(() => client.send(new DeleteObjectCommand({ Bucket: this.settings.bucket, Key: probe })));
      } catch (err) {
        return line(err, "write");
      }
      return null;
    } finally {
      client.destroy();
    }
  }
}

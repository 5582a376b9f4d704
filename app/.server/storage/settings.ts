import path from "node:path";
import type { S3Settings } from "./s3";

export type StorageSettings = { kind: "local"; root: string } | ({ kind: "s3" } & S3Settings);

type Vars = Record<string, string | undefined>;

const s3Only = ["S3_ENDPOINT", "S3_REGION", "S3_FORCE_PATH_STYLE"] as const;

/**
 * Where frames and attachments go, from the environment: S3_BUCKET set means an S3-compatible
 * bucket (S3_ENDPOINT for one outside AWS, S3_REGION, S3_FORCE_PATH_STYLE=1 for servers that want
 * the bucket in the path); otherwise the folder UPLOADS_DIR, as before. A setting that cannot be
 * right gives one line naming it instead.
 */
export function storageSettings(vars: Vars, defaultRoot: string): StorageSettings | { problem: string } {
  const bucket = vars.S3_BUCKET?.trim();
  if (!bucket) {
    const stray = s3Only.find((name) => vars[name]?.trim());
    if (stray) {
      return {
        problem: `Tankside will not start: ${stray} is set but S3_BUCKET is not. Set S3_BUCKET to the bucket for frames and attachments, or unset ${stray} to keep them in UPLOADS_DIR (${defaultRoot}).`,
      };
    }
    return { kind: "local", root: path.resolve(defaultRoot) };
  }
  // Bucket names are letters, digits, dots, hyphens (and, on some S3-compatible servers, underscores);
  // "s3://name" or "name/folder" is a common slip.
  if (!/^[A-Za-z0-9][A-Za-z0-9._-]{1,254}$/.test(bucket)) {
    return {
      problem: `Tankside will not start: S3_BUCKET '${bucket}' is not a bucket name (letters, digits, dots and hyphens only; no "s3://" and no folder).`,
    };
  }
  const endpoint = vars.S3_ENDPOINT?.trim() || null;
  if (endpoint) {
    let url: URL | null = null;
    try {
      url = new URL(endpoint);
    } catch {
      url = null;
    }
    if (!url || !["http:", "https:"].includes(url.protocol)) {
      return { problem: `Tankside will not start: S3_ENDPOINT '${endpoint}' is not an http:// or https:// address (for example http://127.0.0.1:9000).` };
    }
  }
  const pathStyle = (vars.S3_FORCE_PATH_STYLE ?? "").trim().toLowerCase();
  if (!["", "0", "1", "true", "false"].includes(pathStyle)) {
    return {
      problem: `Tankside will not start: S3_FORCE_PATH_STYLE is '${vars.S3_FORCE_PATH_STYLE}'; set it to 1 (bucket in the path, as most S3-compatible servers want) or 0.`,
    };
  }
  const region = vars.S3_REGION?.trim() || vars.AWS_REGION?.trim() || "us-east-1";
  return { kind: "s3", bucket, endpoint, region, forcePathStyle: pathStyle === "1" || pathStyle === "true" };
}

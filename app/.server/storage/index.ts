import { env } from "../env";
import { LocalStore } from "./local";
import { S3Store } from "./s3";
import { storageSettings } from "./settings";
import type { ObjectStore } from "./types";

export { LocalStore } from "./local";
export { S3Store, describeS3 } from "./s3";
export { ScratchDir } from "./scratch";
export { storageSettings } from "./settings";
export { MissingObjectError, StorageUnavailableError, type ObjectInfo, type ObjectStore, type OpenedObject } from "./types";
export { calibrationKey, frameFileRunId, frameKey, frameThumbKey, generatedName, runKey, runPrefix, type FrameFileRef } from "./keys";

let current: ObjectStore | null = null;

/**
 * The store every feature uses, chosen from the environment on first use: an S3-compatible
 * bucket when S3_BUCKET is set, else the folder UPLOADS_DIR. Boot checks the settings before the
 * first request (storageStartupProblem); a setting that cannot be right throws here.
 */
export function store(): ObjectStore {
  if (current) return current;
  const settings = storageSettings(process.env, env.uploadsDir);
  if ("problem" in settings) throw new Error(settings.problem);
  current = settings.kind === "s3" ? new S3Store(settings) : new LocalStore(settings.root);
  return current;
}

/** Tests that change the S3 settings at run time take a fresh store afterwards. */
export function resetStore() {
  current = null;
}

/** One line saying why Tankside cannot keep its files as configured, or null. Called by boot. */
export async function storageStartupProblem(): Promise<string | null> {
  const settings = storageSettings(process.env, env.uploadsDir);
  if ("problem" in settings) return settings.problem;
  return store().startupProblem();
}

/**
 * Runs `fn` over the items, at most `limit` at a time, keeping their order in the results. After a
 * failure no new item starts, and the first error is thrown once the running ones have settled
 * (so nothing is still writing into a folder the caller is about to remove).
 */
export async function mapLimit<T, R>(items: T[], limit: number, fn: (item: T, index: number) => Promise<R>): Promise<R[]> {
  const out = new Array<R>(items.length);
  let next = 0;
  let failure: { err: unknown } | null = null;
  const worker = async () => {
    while (next < items.length && !failure) {
      const i = next++;
      try {
        out[i] = await fn(items[i]!, i);
      } catch (err) {
        failure ??= { err };
      }
    }
  };
  await Promise.all(Array.from({ length: Math.min(limit, items.length) }, worker));
  if (failure) throw (failure as { err: unknown }).err;
  return out;
}

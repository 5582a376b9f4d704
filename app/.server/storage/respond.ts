import { Readable } from "node:stream";
import { apiError } from "../http";
import { store } from "./index";
import { StorageUnavailableError } from "./types";

/** The store did not answer: 503 with a message a person can act on; the detail goes to the log. */
export function storageUnavailable(err: StorageUnavailableError) {
  console.error(`[storage] ${err.message}`);
  return apiError(503, "storage_unavailable", "The file store cannot be reached just now; try again in a moment.");
}

/**
 * A stored object as the answer to a request that has already passed its permission check,
 * streamed through the server (the bucket is never exposed). A missing object is a 404 that says
 * which file, never a 500.
 */
export async function storedFileResponse(key: string, opts: { contentType: string; what: string; hint?: string; headers?: Record<string, string> }): Promise<Response> {
  let opened;
  try {
    opened = await store().open(key);
  } catch (err) {
    if (err instanceof StorageUnavailableError) return storageUnavailable(err);
    throw err;
  }
  if (!opened) return apiError(404, "file_missing", `The file of ${opts.what} is missing from storage.${opts.hint ? ` ${opts.hint}` : ""}`);
  return new Response(Readable.toWeb(opened.body) as ReadableStream, {
    headers: { "Content-Type": opts.contentType, "Content-Length": String(opened.size), ...opts.headers },
  });
}

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
 * streamed through the server (the bucket is never exposed). A HEAD request only looks the object
 * up, so no download is opened that nobody reads. A missing object is a 404 `file_missing` with
 * the given message, never a 500; a store that does not answer, a 503.
 */
export async function storedFileResponse(
  request: Request,
  key: string,
  opts: { contentType: string; missing: string; headers?: Record<string, string> },
): Promise<Response> {
  try {
    if (request.method === "HEAD") {
      const info = await store().head(key);
      if (!info) return apiError(404, "file_missing", opts.missing);
      return new Response(null, { headers: { "Content-Type": opts.contentType, "Content-Length": String(info.size), ...opts.headers } });
    }
    const opened = await store().open(key);
    if (!opened) return apiError(404, "file_missing", opts.missing);
    return new Response(Readable.toWeb(opened.body) as ReadableStream, {
      headers: { "Content-Type": opts.contentType, "Content-Length": String(opened.size), ...opts.headers },
    });
  } catch (err) {
    if (err instanceof StorageUnavailableError) return storageUnavailable(err);
    throw err;
  }
}

// Request bodies of Tankside's HTTP server. Every body the app reads has a size limit for its path,
// enforced while it streams in (chunked or not) so no request can make the server hold more than
// that; apart from server.mjs so it can be tested without a server (OWASP ASVS 4.0.3 V12.1.1,
// RFC 9110 §15.5.14 "413 Content Too Large").
import { createRequestHandler as createReactRouterHandler } from "react-router";

const KiB = 1024;
const MiB = 1024 * KiB;

/** Room for the multipart framing around the one file: boundaries, part headers, the `timeS` field. */
export const MULTIPART_ALLOWANCE_BYTES = 64 * KiB;

/**
 * The largest body each kind of request may send. The file sizes match app/lib/upload-limits.ts
 * (maxFrameBytes, maxZipBytes, MULTIPART_ALLOWANCE_BYTES) and MAX_ATTACHMENT_BYTES; a unit test
 * keeps them equal, because this file runs under plain Node and cannot import the app's TypeScript.
 */
export const bodyLimits = {
  /** Every form and JSON body: the largest real one (run setup with a full readings table) is a few kB. */
  form: { bytes: 64 * KiB, message: "Forms and JSON bodies may be at most 64 KiB." },
  /** A frame upload that does not say it is a ZIP: one image. */
  frameUpload: {
    bytes: 30 * MiB + MULTIPART_ALLOWANCE_BYTES,
    message: "One frame may be at most 30 MiB. A ZIP of frames is sent with ?kind=zip (at most 400 MiB).",
  },
  /** A frame upload with ?kind=zip. */
  zipUpload: { bytes: 400 * MiB + MULTIPART_ALLOWANCE_BYTES, message: "A ZIP of frames may be at most 400 MiB." },
  calibrationAttachment: { bytes: 20 * MiB + MULTIPART_ALLOWANCE_BYTES, message: "Attachments can be at most 20 MiB." },
};

const frameUploadPath = /^\/api\/v1\/runs\/[^/]+\/frames\/?$/;
const attachmentPath = /^\/api\/v1\/calibrations\/[^/]+\/attachments\/?$/;

/**
 * Which limit a request falls under, by its path and, for a frame upload, what its query says it
 * is (`kind=zip`; anything else is one frame, and the app refuses a kind it does not know).
 * Anything not recognised as an upload gets the small one.
 */
export function bodyLimitFor(method, path, search = "") {
  if (method === "POST" && frameUploadPath.test(path)) {
    const kinds = new URLSearchParams(search).getAll("kind");
    return kinds.length === 1 && kinds[0] === "zip" ? bodyLimits.zipUpload : bodyLimits.frameUpload;
  }
  if (method === "POST" && attachmentPath.test(path)) return bodyLimits.calibrationAttachment;
  return bodyLimits.form;
}

export class BodyTooLargeError extends Error {
  status = 413;
  code = "too_large";
  constructor(limit) {
    super(limit.message);
    this.limit = limit;
  }
}

export class BodyAbortedError extends Error {
  status = 400;
  code = "body_aborted";
  constructor() {
    super("The request body stopped before its end.");
  }
}

function wantsJson(req) {
  return req.path.startsWith("/api/") || (req.get("accept") ?? "").includes("json") || (req.get("content-type") ?? "").includes("json");
}

/**
 * Answers 413 and closes the connection: the rest of the body is never read, so the socket cannot
 * carry another request.
 */
export function sendTooLarge(req, res, limit) {
  if (res.headersSent) {
    req.socket.destroy();
    return;
  }
  res.setHeader("Connection", "close");
  res.status(413);
  if (wantsJson(req)) res.json({ error: { code: "too_large", message: limit.message } });
  else res.type("text/plain").send(`${limit.message} The request was refused.`);
}

/** The query string of a request, without its "?". */
function searchOf(req) {
  const at = req.originalUrl.indexOf("?");
  return at === -1 ? "" : req.originalUrl.slice(at + 1);
}

/** A declared Content-Length over the limit is refused before a byte of the body is read. */
export function refuseOversizedBodies(req, res, next) {
  const limit = bodyLimitFor(req.method, req.path, searchOf(req));
  const declared = Number(req.get("content-length") ?? 0);
  if (declared > limit.bytes) return sendTooLarge(req, res, limit);
  next();
}

/**
 * A refusal (401/403/413…) can be sent before an upload's body is read. Such a socket cannot be
 * reused for the next request, so tell the client to close it instead of letting it reset.
 */
export function closeUnreadUploads(req, res, next) {
  const writeHead = res.writeHead;
  res.writeHead = function (...args) {
    if (!req.complete && !res.headersSent) res.setHeader("Connection", "close");
    return writeHead.apply(this, args);
  };
  next();
}

/**
 * The bytes of `source` (a Node request) as a web stream that counts them: past `limit.bytes` it
 * stops reading, errors with BodyTooLargeError and calls `onTooLarge`. A source that closes before
 * its end errors too (BodyAbortedError), so a reader never takes a cut-off body for a whole one.
 * It reads only as fast as the reader takes (one 64 KiB queue).
 */
export function limitedBody(source, limit, onTooLarge = () => {}) {
  let received = 0;
  let settled = false;
  let detach = () => {};
  return new ReadableStream(
    {
      start(controller) {
        const finish = (how) => {
          if (settled) return;
          settled = true;
          detach();
          how();
        };
        const onData = (chunk) => {
          if (settled) return;
          received += chunk.length;
          if (received > limit.bytes) {
            source.pause();
            const err = new BodyTooLargeError(limit);
            finish(() => controller.error(err));
            onTooLarge(err);
            return;
          }
          controller.enqueue(new Uint8Array(chunk.buffer, chunk.byteOffset, chunk.length));
          if ((controller.desiredSize ?? 0) <= 0) source.pause();
        };
        const onEnd = () => finish(() => controller.close());
        const onError = () => finish(() => controller.error(new BodyAbortedError()));
        const onClose = () => finish(() => controller.error(new BodyAbortedError()));
        source.on("data", onData);
        source.on("end", onEnd);
        source.on("error", onError);
        source.on("close", onClose);
        source.pause();
        detach = () => {
          source.off("data", onData);
          source.off("end", onEnd);
          source.off("close", onClose);
          // An error after the end must not go unhandled.
          source.off("error", onError);
          source.on("error", () => {});
        };
      },
      pull() {
        if (!settled) source.resume();
      },
      cancel() {
        settled = true;
        detach();
        source.pause();
      },
    },
    new ByteLengthQueuingStrategy({ highWaterMark: 64 * KiB }),
  );
}

function requestHeaders(nodeHeaders) {
  const headers = new Headers();
  for (const [key, values] of Object.entries(nodeHeaders)) {
    if (!values) continue;
    if (Array.isArray(values)) for (const value of values) headers.append(key, value);
    else headers.set(key, values);
  }
  return headers;
}

/** The web Request the app sees, as @react-router/express builds it but with a limited body. */
export function webRequest(req, res) {
  const [, forwardedPort] = req.app?.enabled("trust proxy") ? (req.get("X-Forwarded-Host")?.split(":") ?? []) : [];
  const [, hostPort] = req.get("host")?.split(":") ?? [];
  const port = [Number.parseInt(forwardedPort, 10), Number.parseInt(hostPort, 10)].find((p) => Number.isSafeInteger(p)) ?? "";
  const hostname = req.hostname.split(/[\\/?#@]/)[0] || "localhost";
  const url = new URL(`${req.protocol}://${hostname}${port ? `:${port}` : ""}${req.originalUrl}`);
  let controller = new AbortController();
  res.on("finish", () => (controller = null));
  res.on("close", () => controller?.abort());
  const init = { method: req.method, headers: requestHeaders(req.headers), signal: controller.signal };
  if (req.method !== "GET" && req.method !== "HEAD") {
    const limit = bodyLimitFor(req.method, req.path, searchOf(req));
    init.body = limitedBody(req, limit, () => {
      sendTooLarge(req, res, limit);
      controller?.abort();
    });
    init.duplex = "half";
  }
  return new Request(url.href, init);
}

async function sendWebResponse(res, response) {
  // Already answered (a 413 mid-body, or the client left): the app's late answer goes nowhere.
  if (res.headersSent || res.destroyed || res.writableEnded) {
    await response.body?.cancel();
    return;
  }
  res.statusMessage = response.statusText;
  res.status(response.status);
  for (const [key, value] of response.headers.entries()) res.append(key, value);
  if (response.headers.get("Content-Type")?.match(/text\/event-stream/i)) res.flushHeaders();
  if (!response.body) return void res.end();
  try {
    await writeBody(response.body, res);
  } catch (err) {
    if (res.destroyed || res.writableEnded) return;
    throw err;
  }
}

/**
 * Writes a web body to the response, flushing each chunk (streamed pages arrive as they render) and
 * waiting for 'drain' when the response's buffer is full. It keeps ONE 'drain' listener for the whole
 * response: the compression middleware passes `res.on("drain")` to its zlib stream but not
 * `res.off`, so a writer that adds and removes a listener per wait (as @react-router/node's does)
 * leaves one behind at every wait, and a long compressed answer passed Node's limit of ten
 * (MaxListenersExceededWarning).
 */
export async function writeBody(body, res) {
  const reader = body.getReader();
  let wake = () => {};
  let failClosed = () => {};
  const closedError = () => new Error("The response closed before its body was written.");
  // Settles only when the client leaves, so a read that waits on a quiet stream does not wait forever.
  const whenClosed = new Promise((_, reject) => (failClosed = () => reject(closedError())));
  whenClosed.catch(() => {});
  const onDrain = () => wake();
  const onClose = () => {
    failClosed();
    wake();
  };
  res.on("drain", onDrain);
  res.on("close", onClose);
  try {
    for (;;) {
      if (res.destroyed) throw closedError();
      const { done, value } = await Promise.race([reader.read(), whenClosed]);
      if (done) {
        res.end();
        return;
      }
      if (res.destroyed) throw closedError();
      const canContinue = res.write(value);
      if (typeof res.flush === "function") res.flush();
      if (!canContinue) await Promise.race([new Promise((resolve) => (wake = resolve)), whenClosed]);
      wake = () => {};
    }
  } catch (err) {
    reader.cancel(err).catch(() => {});
    if (!res.destroyed) res.destroy(err);
    throw err;
  } finally {
    res.off("drain", onDrain);
    res.off("close", onClose);
    try {
      reader.releaseLock();
    } catch {
      // A read still pending after cancel keeps the lock; the stream is finished with either way.
    }
  }
}

/** Express handler around any web handler (Request → Response); the app's is below. */
export function handleWithLimitedBodies(handleRequest, getLoadContext) {
  return async (req, res, next) => {
    try {
      const request = webRequest(req, res);
      const context = await getLoadContext?.(req, res);
      const response = await handleRequest(request, context);
      await sendWebResponse(res, response);
    } catch (err) {
      if (res.headersSent) return void req.socket.destroy();
      next(err);
    }
  };
}

/** Stands in for @react-router/express's createRequestHandler. */
export function createRequestHandler({ build, mode, getLoadContext }) {
  return handleWithLimitedBodies(createReactRouterHandler(build, mode), getLoadContext);
}

import crypto from "node:crypto";
import fs from "node:fs";
import fsp from "node:fs/promises";
import path from "node:path";
import { Readable } from "node:stream";
import { pipeline } from "node:stream/promises";
import type { ReadableStream as NodeWebStream } from "node:stream/web";
import busboy from "busboy";
import { env } from "../env";

export class UploadError extends Error {
  constructor(
    message: string,
    readonly status = 400,
    readonly code = "invalid_upload",
  ) {
    super(message);
  }
}

/** An uploaded file on disk under uploads/tmp/, waiting to be checked and handed to the store. */
export interface StagedFile {
  path: string;
  name: string;
  sizeBytes: number;
}

export function stagingDir() {
  return path.join(env.uploadsDir, "tmp");
}

async function newStagingPath() {
  await fsp.mkdir(stagingDir(), { recursive: true });
  return path.join(stagingDir(), `${crypto.randomUUID()}.part`);
}

export async function discardStaged(file: StagedFile | null) {
  if (file) await fsp.rm(file.path, { force: true });
}

/** Bytes already in memory (seed data, tests) take the same path as an upload: a staged file. */
export async function stageBytes(name: string, bytes: Uint8Array): Promise<StagedFile> {
  const file = await newStagingPath();
  await fsp.writeFile(file, bytes, { flag: "wx" });
  return { path: file, name, sizeBytes: bytes.length };
}

export async function readHead(file: StagedFile, bytes: number): Promise<Buffer> {
  const handle = await fsp.open(file.path, "r");
  try {
    const buf = Buffer.alloc(bytes);
    const { bytesRead } = await handle.read(buf, 0, bytes, 0);
    return buf.subarray(0, bytesRead);
  } finally {
    await handle.close();
  }
}

export async function sha256OfFile(file: string) {
  const hash = crypto.createHash("sha256");
  await pipeline(fs.createReadStream(file), hash);
  return hash.digest("hex");
}

export interface MultipartOptions {
  /** The most the `file` part may hold; counted while it is written. */
  maxFileBytes: number;
  tooLarge: UploadError;
  /** Said when the body is not readable multipart form data. */
  unreadable: UploadError;
}

export interface MultipartUpload {
  file: StagedFile | null;
  fields: Record<string, string>;
}

/** What went wrong with the body stream itself: over the server's limit, or the client left. */
function bodyFailure(err: unknown, opts: MultipartOptions) {
  const code = (err as { code?: string } | null)?.code;
  if (code === "too_large") return opts.tooLarge;
  return new UploadError("The upload stopped before its end.", 400, "upload_aborted");
}

/**
 * Reads a multipart body as it streams in: the part named `file` goes to a temporary file (at most
 * maxFileBytes, else tooLarge at once), a few small text fields are kept. Nothing is held whole in
 * memory; the temporary file is gone again whatever happens, unless the caller receives it.
 */
export async function stageMultipart(request: Request, opts: MultipartOptions): Promise<MultipartUpload> {
  if (!request.body) throw opts.unreadable;
  let parser: busboy.Busboy;
  try {
    parser = busboy({
      headers: { "content-type": request.headers.get("content-type") ?? "" },
      // Uppy sends a few metadata fields with the file (name, type); 16 of at most 4 KiB fill the 64 KiB the server allows beside it.
      limits: { files: 1, fileSize: opts.maxFileBytes, fields: 16, fieldSize: 4 * 1024, parts: 17, headerPairs: 16 },
    });
  } catch {
    throw opts.unreadable;
  }
  const stagingPath = await newStagingPath();
  const source = Readable.fromWeb(request.body as NodeWebStream<Uint8Array>);

  return new Promise<MultipartUpload>((resolve, reject) => {
    const fields: Record<string, string> = {};
    let staged: StagedFile | null = null;
    let writing: Promise<void> = Promise.resolve();
    let fileStream: Readable | null = null;
    let out: fs.WriteStream | null = null;
    let failed = false;

    const fail = (err: UploadError) => {
      if (failed) return;
      failed = true;
      // busboy still touches its state after emitting an event; tear it down once that returns.
      queueMicrotask(() => tearDown(err));
    };
    const tearDown = (err: UploadError) => {
      source.unpipe(parser);
      source.destroy();
      fileStream?.destroy();
      out?.destroy();
      parser.destroy();
      // Removed only once the write stream has let go of it: its pipeline settled and its file
      // closed (a stream destroyed while its open is still under way closes only after the open,
      // which creates the file).
      const target = out;
      const closed = target && !target.closed ? new Promise<void>((done) => target.once("close", () => done())) : Promise.resolve();
      Promise.all([writing.catch(() => {}), closed])
        .then(() => fsp.rm(stagingPath, { force: true }))
        .then(() => reject(err), () => reject(err));
    };

    parser.on("file", (name, stream, info) => {
      // A part parsed after the upload was refused is not written: nothing would remove it.
      if (failed || name !== "file" || fileStream) {
        stream.resume();
        return;
      }
      fileStream = stream;
      out = fs.createWriteStream(stagingPath, { flags: "wx" });
      const target = out;
      stream.on("limit", () => fail(opts.tooLarge));
      writing = pipeline(stream, target).then(() => {
        staged = { path: stagingPath, name: info.filename ?? "", sizeBytes: target.bytesWritten };
      });
      writing.catch(() => fail(opts.unreadable));
    });
    parser.on("field", (name, value, info) => {
      if (info.nameTruncated || info.valueTruncated) return fail(new UploadError(`The form field ${name.slice(0, 40)} is too long.`, 400, "invalid_multipart"));
      fields[name] = value;
    });
    for (const event of ["filesLimit", "fieldsLimit", "partsLimit"] as const) {
      parser.on(event, () => fail(new UploadError("Send one file and its few fields in one upload.", 400, "invalid_multipart")));
    }
    parser.on("error", () => fail(opts.unreadable));
    parser.on("close", () => {
      writing.then(
        () => {
          if (!failed) resolve({ file: staged, fields });
        },
        () => fail(opts.unreadable),
      );
    });
    source.on("error", (err) => fail(bodyFailure(err, opts)));
    source.pipe(parser);
  });
}

/** Stages a multipart upload, hands it to `consume`, and always removes the temporary file after. */
export async function withMultipartUpload<T>(request: Request, opts: MultipartOptions, consume: (upload: MultipartUpload) => Promise<T>): Promise<T> {
  const upload = await stageMultipart(request, opts);
  try {
    return await consume(upload);
  } finally {
    await discardStaged(upload.file);
  }
}

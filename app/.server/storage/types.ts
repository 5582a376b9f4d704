import type { Readable } from "node:stream";
import type { ScratchDir } from "./scratch";

/** One stored object as a listing or a head request sees it. */
export interface ObjectInfo {
  key: string;
  size: number;
  modified: Date;
}

/** An object opened for reading: its bytes as a stream, and how many there are. */
export interface OpenedObject {
  body: Readable;
  size: number;
}

/**
 * Where frames, thumbnails, overlays and calibration attachments live, under keys such as
 * `runs/<run id>/<stored name>` and `calibrations/<stored name>`. Two implementations: a folder
 * on this machine (UPLOADS_DIR, the default) and an S3-compatible bucket. A missing object is
 * `null` (or MissingObjectError where a path must be had), never a thrown "not found" of the
 * implementation's own; a store that cannot be reached throws StorageUnavailableError.
 */
export interface ObjectStore {
  readonly kind: "local" | "s3";
  /** Where, in words: for logs and messages. */
  readonly where: string;
  /** Creates or replaces the object. */
  put(key: string, data: Buffer, contentType?: string): Promise<void>;
  /**
   * Stores a local file (a staged upload) under the key, streaming it; the file is taken: it is
   * renamed into place on disk, or uploaded and then removed.
   */
  putFile(key: string, file: string, contentType?: string): Promise<void>;
  /** The whole object in memory, or null. For small objects (thumbnails, overlays, one frame). */
  get(key: string): Promise<Buffer | null>;
  open(key: string): Promise<OpenedObject | null>;
  head(key: string): Promise<ObjectInfo | null>;
  /** Removes the object; one already gone is fine. */
  delete(key: string): Promise<void>;
  /** Every object whose key starts with the prefix (a folder-like prefix ending in "/"). */
  list(prefix: string): Promise<ObjectInfo[]>;
  /**
   * A file on this machine holding the object, for code that reads files (the tracking pool): the
   * object's own file on disk, or a copy downloaded into the scratch folder. Throws
   * MissingObjectError when there is no such object in a bucket.
   */
  localPath(key: string, scratch: ScratchDir): Promise<string>;
  /**
   * Whether the store can be used as configured, checked once at start: null, or one line saying
   * what is wrong with which setting.
   */
  startupProblem(): Promise<string | null>;
}

export class MissingObjectError extends Error {
  constructor(
    readonly key: string,
    where: string,
  ) {
    super(`${key} is missing from ${where}`);
    this.name = "MissingObjectError";
  }
}

/** The store did not answer or refused (network, credentials, the bucket gone): not the object's absence. */
export class StorageUnavailableError extends Error {
  constructor(message: string, options?: { cause?: unknown }) {
    super(message, options);
    this.name = "StorageUnavailableError";
  }
}

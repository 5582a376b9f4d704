/** Limits on what a frame upload may be; shown on the page and enforced on the server. */
export const uploadLimits = {
  /** One image file. */
  maxFrameBytes: 30 * 1024 * 1024,
  /** One ZIP of frames. */
  maxZipBytes: 400 * 1024 * 1024,
  maxFramesPerRun: 3000,
  maxZipEntries: 3000,
  /** Unpacked size of all entries of one ZIP. */
  maxZipUnpackedBytes: 2 * 1024 * 1024 * 1024,
  /** sharp's decompression-bomb guard: at most this many pixels in one frame (about 8K × 5K). */
  maxFramePixels: 40_000_000,
  acceptedFormats: ["jpeg", "png", "tiff", "webp"] as const,
} as const;

export const acceptedFrameTypes = [".jpg", ".jpeg", ".png", ".tif", ".tiff", ".webp", ".zip"];

/**
 * What a frame upload says it is (`?kind=` on POST /api/v1/runs/:runId/frames): one frame (the
 * default) or a ZIP of frames. The server takes the body limit from it and refuses a declared
 * Content-Length over that limit before reading any of the body; the content is still judged.
 */
export const frameUploadKinds = ["frame", "zip"] as const;
export type FrameUploadKind = (typeof frameUploadKinds)[number];

/** Room for the multipart framing around the one file: boundaries, part headers, the small fields (server-bodies.mjs has the same). */
export const MULTIPART_ALLOWANCE_BYTES = 64 * 1024;

/** The kind a browser declares for a file it sends, by its name only (the server judges the content). */
export function frameUploadKindOf(fileName: string): FrameUploadKind {
  return /\.zip$/i.test(fileName) ? "zip" : "frame";
}

/** The largest file an upload of this kind may carry. */
export function maxUploadFileBytes(kind: FrameUploadKind): number {
  return kind === "zip" ? uploadLimits.maxZipBytes : uploadLimits.maxFrameBytes;
}

/** The largest request body of this kind: the file plus the multipart allowance. */
export function maxUploadBodyBytes(kind: FrameUploadKind): number {
  return maxUploadFileBytes(kind) + MULTIPART_ALLOWANCE_BYTES;
}

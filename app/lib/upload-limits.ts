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

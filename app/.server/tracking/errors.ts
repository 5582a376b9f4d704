/**
 * Why a tracking job stopped, in words a technician can act on. `code` lets the job queue tell
 * a failure (keep the reason, allow a retry) from a cancellation.
 */
export type TrackingErrorCode = "no-frames" | "bad-input" | "bad-setup" | "unreadable-frame" | "frame-size" | "tracer-not-found" | "no-tracks" | "cancelled";

export class TrackingError extends Error {
  readonly code: TrackingErrorCode;
  /** 0-based index of the frame concerned, when there is one. */
  readonly frameIndex: number | null;

  constructor(code: TrackingErrorCode, message: string, options?: { frameIndex?: number; cause?: unknown }) {
    super(message, options?.cause === undefined ? undefined : { cause: options.cause });
    // AbortError is the name fetch and timers use for a cancelled operation; callers test for it.
    this.name = code === "cancelled" ? "AbortError" : "TrackingError";
    this.code = code;
    this.frameIndex = options?.frameIndex ?? null;
  }
}

export function isTrackingCancelled(error: unknown): boolean {
  return error instanceof TrackingError && error.code === "cancelled";
}

/** A job stopped because it was cancelled (its signal aborted). */
export function cancelled(): TrackingError {
  return new TrackingError("cancelled", "The tracking job was cancelled.");
}

/** A frame the worker could not search: the frame is named, the worker's reason kept. */
export function searchFailed(index: number, error: unknown): TrackingError {
  const reason = error instanceof Error ? error.message : String(error);
  return new TrackingError("unreadable-frame", `Frame ${index + 1} could not be searched: ${reason}`, {
    frameIndex: index,
    cause: error,
  });
}

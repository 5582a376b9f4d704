import type { TheoryCheckInput, TheoryCheckResult } from "~/lib/analysis/check";
import type { StoredTrackCheck, TrackCombination } from "~/lib/analysis/check-tracks";

/** A stored theory check as the pages receive it (see storedCheck in .server/runs/theory). */
export interface StoredCheckView {
  id: number;
  /** the combined check */
  result: TheoryCheckResult;
  /** one per track */
  checks: StoredTrackCheck[];
  combination: TrackCombination | null;
  input: Omit<TheoryCheckInput, "points"> & {
    trackId: number;
    trackNumber?: number | null;
    pointCount: number;
    tracks?: { id: number; number: number; pointCount: number }[];
  };
  codeVersion: string;
  createdAt: string;
}

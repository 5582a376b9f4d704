import type { TheoryCheckInput, TheoryCheckResult } from "~/lib/analysis/check";

/** A stored theory check as the pages receive it. */
export interface StoredCheckView {
  id: number;
  result: TheoryCheckResult;
  input: Omit<TheoryCheckInput, "points"> & { trackId: number; pointCount: number };
  codeVersion: string;
  createdAt: string;
}

/**
 * What a page can tell its error page when the status alone would mislead: a 403 reads "Not for
 * your role", which is wrong when the role is fine and the record is someone else's.
 */
export interface ErrorPageReason {
  title: string;
  message: string;
  link?: { to: string; label: string };
}

export function isErrorPageReason(value: unknown): value is ErrorPageReason {
  if (typeof value !== "object" || value === null) return false;
  const v = value as Record<string, unknown>;
  return typeof v.title === "string" && typeof v.message === "string";
}

/**
 * A setting that keeps the server from starting. server.mjs prints its message as one line and
 * exits with 1 — no stack trace, since the message names the setting and what is wrong with it.
 */
export class StartupProblem extends Error {
  readonly startupProblem = true;
}

/** A database or storage address fit to print: any password in it replaced by ***. */
export function redactUrl(raw: string): string {
  try {
    const url = new URL(raw);
    if (url.password) url.password = "***";
    return url.toString();
  } catch {
    return raw.replace(/\/\/([^:/@]+):[^@]*@/, "//$1:***@");
  }
}

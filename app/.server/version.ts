import { execFileSync } from "node:child_process";
import fs from "node:fs";
import path from "node:path";
import { env } from "./env";

/** The code version stored with every result: package version plus the git commit when there is one. */
function readVersion(): string {
  let version = "0.0.0";
  try {
    version = (JSON.parse(fs.readFileSync(path.join(env.projectRoot, "package.json"), "utf8")) as { version: string }).version;
  } catch {
    // A copy without package.json still runs; the version then says so.
  }
  try {
    const commit = execFileSync("git", ["rev-parse", "--short=12", "HEAD"], { cwd: env.projectRoot, stdio: ["ignore", "pipe", "ignore"] })
      .toString()
      .trim();
    if (commit) return `${version}+${commit}`;
  } catch {
    // Not a git checkout.
  }
  return version;
}

export const codeVersion = readVersion();

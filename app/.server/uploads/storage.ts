import crypto from "node:crypto";
import fs from "node:fs/promises";
import path from "node:path";
import { env } from "../env";

/** Files live under uploads/ with generated names; the original name is kept only in the database. */
export function runDir(runId: number) {
  return path.join(env.uploadsDir, "runs", String(runId));
}

export function generatedName(ext: string) {
  return `${crypto.randomUUID()}.${ext}`;
}

export async function writeRunFile(runId: number, name: string, data: Buffer) {
  const dir = runDir(runId);
  await fs.mkdir(dir, { recursive: true });
  const file = path.join(dir, name);
  await fs.writeFile(file, data, { flag: "wx" });
  return file;
}

export function runFilePath(runId: number, name: string) {
  // Names come from the database, never from a request; the check keeps it that way.
  if (!/^[a-zA-Z0-9._-]+$/.test(name)) throw new Error("bad stored file name");
  return path.join(runDir(runId), name);
}

export async function removeQuietly(file: string) {
  await fs.rm(file, { force: true });
}

import fs from "node:fs/promises";
import path from "node:path";
import { CalibrationAttachment, Frame } from "../db";
import { env } from "../env";

/** A file younger than this may belong to an upload whose database row is not committed yet. */
export const ORPHAN_MIN_AGE_MS = 10 * 60_000;

async function entries(dir: string) {
  try {
    return await fs.readdir(dir, { withFileTypes: true });
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === "ENOENT") return [];
    throw err;
  }
}

/**
 * Removes frame and attachment files that no database row names (left by a crash between writing
 * the file and committing its row), and staged uploads a crash left in uploads/tmp/, if older than
 * ORPHAN_MIN_AGE_MS. Only the folders Tankside writes are looked at: uploads/runs/<run id>/,
 * uploads/calibrations/ and uploads/tmp/. Returns how many went.
 */
export async function removeOrphanUploads(now: Date = new Date(), root: string = env.uploadsDir): Promise<number> {
  const cutoff = now.getTime() - ORPHAN_MIN_AGE_MS;
  let removed = 0;
  const removeIfOld = async (file: string) => {
    const stat = await fs.stat(file).catch(() => null);
    if (!stat || !stat.isFile() || stat.mtimeMs > cutoff) return;
    await fs.rm(file, { force: true });
    removed++;
  };

  const runsDir = path.join(root, "runs");
  for (const runEntry of await entries(runsDir)) {
    if (!runEntry.isDirectory() || !/^\d+$/.test(runEntry.name)) continue;
    const runId = Number(runEntry.name);
    const frames = await Frame.findAll({ where: { runId }, attributes: ["storedName", "thumbName"] });
    const known = new Set(frames.flatMap((f) => [f.storedName, f.thumbName].filter((n): n is string => Boolean(n))));
    for (const file of await entries(path.join(runsDir, runEntry.name))) {
      if (file.isFile() && !known.has(file.name)) await removeIfOld(path.join(runsDir, runEntry.name, file.name));
    }
  }

  const calDir = path.join(root, "calibrations");
  const files = await entries(calDir);
  if (files.length) {
    const rows = await CalibrationAttachment.findAll({ attributes: ["storedName"] });
    const known = new Set(rows.map((r) => r.storedName));
    for (const file of files) {
      if (file.isFile() && !known.has(file.name)) await removeIfOld(path.join(calDir, file.name));
    }
  }

  // Staged uploads are never named by a row; one still being written keeps a fresh mtime.
  const tmpDir = path.join(root, "tmp");
  for (const file of await entries(tmpDir)) {
    if (file.isFile() && file.name.endsWith(".part")) await removeIfOld(path.join(tmpDir, file.name));
  }
  return removed;
}

import fs from "node:fs/promises";
import path from "node:path";
import { Op } from "sequelize";
import { CalibrationAttachment, Frame } from "../db";
import { env } from "../env";
import { store, type ObjectInfo, type ObjectStore } from "../storage";

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
 * ORPHAN_MIN_AGE_MS. Only what Tankside writes is looked at: objects directly under
 * `runs/<run id>/` and `calibrations/` in the store (the folder or the bucket), and `.part` files in
 * the local staging folder uploads/tmp/. Returns how many went.
 */
export async function removeOrphanUploads(now: Date = new Date(), objects: ObjectStore = store(), stagingRoot: string = env.uploadsDir): Promise<number> {
  const cutoff = now.getTime() - ORPHAN_MIN_AGE_MS;
  let removed = 0;
  const removeIfOld = async (o: ObjectInfo) => {
    if (o.modified.getTime() > cutoff) return;
    await objects.delete(o.key);
    removed++;
  };

  const byRun = new Map<number, { name: string; info: ObjectInfo }[]>();
  for (const o of await objects.list("runs/")) {
    const m = /^runs\/(\d+)\/([^/]+)$/.exec(o.key);
    if (!m) continue;
    const runId = Number(m[1]);
    if (!Number.isSafeInteger(runId)) continue;
    byRun.set(runId, [...(byRun.get(runId) ?? []), { name: m[2]!, info: o }]);
  }
  for (const [runId, files] of byRun) {
    // The files in a run's folder are named by its own frames and by the frames of corrections that share them.
    const frames = await Frame.findAll({
      where: { [Op.or]: [{ fileRunId: runId }, { runId, fileRunId: null }] },
      attributes: ["storedName", "thumbName"],
    });
    const known = new Set(frames.flatMap((f) => [f.storedName, f.thumbName].filter((n): n is string => Boolean(n))));
    for (const file of files) if (!known.has(file.name)) await removeIfOld(file.info);
  }

  const attachments = (await objects.list("calibrations/")).filter((o) => /^calibrations\/[^/]+$/.test(o.key));
  if (attachments.length) {
    const rows = await CalibrationAttachment.findAll({ attributes: ["storedName"] });
    const known = new Set(rows.map((r) => `calibrations/${r.storedName}`));
    for (const o of attachments) if (!known.has(o.key)) await removeIfOld(o);
  }

  // Staged uploads stay on this machine whatever the store; they are never named by a row, and one
  // still being written keeps a fresh mtime.
  const tmpDir = path.join(stagingRoot, "tmp");
  for (const file of await entries(tmpDir)) {
    if (!file.isFile() || !file.name.endsWith(".part")) continue;
    const full = path.join(tmpDir, file.name);
    const stat = await fs.stat(full).catch(() => null);
    if (!stat || !stat.isFile() || stat.mtimeMs > cutoff) continue;
    await fs.rm(full, { force: true });
    removed++;
  }
  return removed;
}

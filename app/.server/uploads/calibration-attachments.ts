import crypto from "node:crypto";
import fs from "node:fs/promises";
import sharp from "sharp";
import { Transaction } from "sequelize";
import { CalibrationAttachment, sequelize } from "../db";
import { noteCalibrationChange } from "../calibration-history";
import { calibrationKey, store } from "../storage";
import type { CurrentUser } from "../auth/permissions";
import { assertCalibrationEditable, CalibrationError } from "../calibrations";
import { discardStaged, sha256OfFile, stageBytes, type StagedFile } from "./staging";

export const MAX_ATTACHMENT_BYTES = 20 * 1024 * 1024;

const imageTypes: Record<string, { type: string; ext: string }> = {
  jpeg: { type: "image/jpeg", ext: "jpg" },
  png: { type: "image/png", ext: "png" },
  webp: { type: "image/webp", ext: "webp" },
  tiff: { type: "image/tiff", ext: "tif" },
  gif: { type: "image/gif", ext: "gif" },
};

/** What a file really is, from its bytes (never its name or the browser's claim): a photo or a PDF. */
export async function sniffAttachment(bytes: Buffer): Promise<{ type: string; ext: string } | null> {
  if (bytes.subarray(0, 5).toString("latin1") === "%PDF-") return { type: "application/pdf", ext: "pdf" };
  try {
    const meta = await sharp(bytes, { failOn: "error" }).metadata();
    return (meta.format && imageTypes[meta.format]) || null;
  } catch {
    return null;
  }
}

/**
 * Adds a photo or PDF to a calibration record: a staged upload, checked from disk and handed to
 * the store under `calibrations/`, or bytes in memory (tests), staged first so both take the same
 * path. Whatever this function staged itself is removed again.
 */
export async function addCalibrationAttachment(calibrationId: number, upload: StagedFile | { name: string; bytes: Buffer }, uploader: Pick<CurrentUser, "id" | "role">) {
  const file = "bytes" in upload ? await stageBytes(upload.name, upload.bytes) : upload;
  try {
    return await storeAttachment(calibrationId, file, uploader);
  } finally {
    if ("bytes" in upload) await discardStaged(file);
  }
}

async function storeAttachment(calibrationId: number, file: StagedFile, uploader: Pick<CurrentUser, "id" | "role">) {
  const uploadedById = uploader.id;
  await assertCalibrationEditable(calibrationId, uploader);
  if (file.sizeBytes === 0) throw new CalibrationError(422, "empty_file", "That file is empty.");
  if (file.sizeBytes > MAX_ATTACHMENT_BYTES) throw new CalibrationError(413, "file_too_large", "Attachments can be at most 20 MB.");
  // At most 20 MB, so reading it for the content check is bounded.
  const kind = await sniffAttachment(await fs.readFile(file.path));
  if (!kind) {
    throw new CalibrationError(422, "unsupported_attachment", `"${file.name}" is not a photo (JPEG, PNG, WebP, TIFF, GIF) or a PDF, judged by its content.`);
  }
  const sha256 = await sha256OfFile(file.path);
  const storedName = `${crypto.randomUUID()}.${kind.ext}`;
  const key = calibrationKey(storedName);
  await store().putFile(key, file.path, kind.type);
  try {
    return await sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
      // Checked again, holding the record's lock: a sign-off may have landed while the file was being written.
      await assertCalibrationEditable(calibrationId, uploader, t);
      const row = await CalibrationAttachment.create(
        {
          calibrationId,
          originalName: file.name.slice(0, 255) || "attachment",
          storedName,
          contentType: kind.type,
          sizeBytes: file.sizeBytes,
          sha256,
          uploadedById,
        },
        { transaction: t },
      );
      await noteCalibrationChange(t, calibrationId, uploadedById, "attachment", null, row.originalName);
      return row;
    });
  } catch (err) {
    await store().delete(key).catch(() => undefined);
    throw err;
  }
}

/**
 * Takes a wrong photo or certificate off a record that is not signed off: the same people as
 * attaching (its performer or a lab manager), under the record's lock so a sign-off lands wholly
 * before (and the removal is refused, 409) or after. The row and its history line go in one
 * transaction; the stored file is deleted after the commit, and a failure to delete it is only
 * logged (the start-up sweep removes files no row names).
 */
export async function removeCalibrationAttachment(calibrationId: number, attachmentId: number, remover: Pick<CurrentUser, "id" | "role">) {
  const removed = await sequelize.transaction({ type: Transaction.TYPES.IMMEDIATE }, async (t) => {
    await assertCalibrationEditable(calibrationId, remover, t);
    const row = await CalibrationAttachment.findOne({ where: { id: attachmentId, calibrationId }, transaction: t });
    if (!row) throw new CalibrationError(404, "not_found", "That attachment is not on this record (removed already?).");
    await row.destroy({ transaction: t });
    await noteCalibrationChange(t, calibrationId, remover.id, "attachmentRemoved", null, row.originalName);
    return { name: row.originalName, key: calibrationKey(row.storedName) };
  });
  await store()
    .delete(removed.key)
    .catch((err: unknown) => console.error(`calibration ${calibrationId}: the file of removed attachment "${removed.name}" could not be deleted`, err));
  return removed;
}

/** An attachment's row and the key of its stored file, or null when there is no such row. */
export async function findCalibrationAttachment(calibrationId: number, attachmentId: number): Promise<{ row: CalibrationAttachment; key: string } | null> {
  const row = await CalibrationAttachment.findOne({ where: { id: attachmentId, calibrationId } });
  if (!row) return null;
  // Stored names are generated here; the check still keeps a tampered row from leaving the folder.
  if (!/^[0-9a-f-]{36}\.[a-z]{3,4}$/.test(row.storedName)) return null;
  return { row, key: calibrationKey(row.storedName) };
}

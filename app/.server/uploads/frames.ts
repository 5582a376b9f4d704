import crypto from "node:crypto";
import fsp from "node:fs/promises";
import sharp from "sharp";
import yauzl from "yauzl";
import { orderBy } from "natural-orderby";
import { Frame, Run, locking, sequelize } from "../db";
import { uploadLimits } from "~/lib/upload-limits";
import { frameKey, frameThumbKey, generatedName, runKey, store } from "../storage";
import { discardStaged, readHead, stageBytes, UploadError, type StagedFile } from "./staging";
import { setRunState } from "../runs/service";
import { formatFixed } from "~/lib/number-format";

export interface AcceptedFrame {
  name: string;
  frameId: number;
  position: number;
  duplicate: boolean;
  /** A duplicate whose stored file had gone missing, put back from this upload. */
  restored?: boolean;
}
export interface RejectedFile {
  name: string;
  message: string;
}
export interface FrameUploadResult {
  accepted: AcceptedFrame[];
  rejected: RejectedFile[];
  frameCount: number;
}

const extFor: Record<string, string> = { jpeg: "jpg", png: "png", tiff: "tif", webp: "webp" };
export const frameContentTypes: Record<string, string> = { jpeg: "image/jpeg", png: "image/png", tiff: "image/tiff", webp: "image/webp" };

export { UploadError };

function frameTooLarge(bytes: number) {
  return new UploadError(`The file is ${formatFixed(bytes / 1e6, 1)} MB; one frame may be at most ${uploadLimits.maxFrameBytes / 1024 / 1024} MB.`, 413, "too_large");
}

/**
 * Checks one image by its content: sharp must recognise an accepted format, the pixel count must
 * stay under the decompression-bomb limit, and the whole image must decode (a truncated JPEG fails
 * here). Returns the format, size and a small thumbnail made from the same decode.
 */
export async function inspectFrame(data: Buffer) {
  if (data.length === 0) throw new UploadError("The file is empty.");
  if (data.length > uploadLimits.maxFrameBytes) throw frameTooLarge(data.length);
  let meta: Awaited<ReturnType<ReturnType<typeof sharp>["metadata"]>>;
  try {
    meta = await sharp(data, { limitInputPixels: uploadLimits.maxFramePixels }).metadata();
  } catch (err) {
    const msg = err instanceof Error ? err.message : String(err);
    if (/pixel limit/i.test(msg)) throw new UploadError(`The image has more than ${uploadLimits.maxFramePixels / 1e6} million pixels; Tankside refuses it.`, 413, "too_many_pixels");
    throw new UploadError("This is not an image Tankside can read (JPEG, PNG, TIFF or WebP).", 415, "not_an_image");
  }
  const format = meta.format ?? "";
  if (!(uploadLimits.acceptedFormats as readonly string[]).includes(format)) {
    throw new UploadError(`This is a ${format || "unknown"} file; frames must be JPEG, PNG, TIFF or WebP.`, 415, "unsupported_format");
  }
  const width = meta.width ?? 0;
  const height = meta.height ?? 0;
  if (width * height > uploadLimits.maxFramePixels) {
    throw new UploadError(`The image is ${width} × ${height} px, over the ${uploadLimits.maxFramePixels / 1e6} million pixel limit.`, 413, "too_many_pixels");
  }
  let thumb: Buffer;
  try {
    thumb = await sharp(data, { limitInputPixels: uploadLimits.maxFramePixels, failOn: "truncated" })
      .resize({ width: 240, withoutEnlargement: true })
      .webp({ quality: 70 })
      .toBuffer();
  } catch {
    throw new UploadError("The image is damaged or cut short and cannot be decoded.", 422, "damaged_image");
  }
  return { format, width, height, thumb };
}

function cleanName(name: string) {
  const base = name.split(/[\\/]/).pop() ?? name;
  return base.slice(0, 255) || "frame";
}

/** Positions 0…N−1 in the stack's order, after frames came or went; returns how many there are. */
export async function renumber(runId: number, transaction: import("sequelize").Transaction) {
  const frames = await Frame.findAll({ where: { runId }, attributes: ["id", "originalName", "timeS", "position"], transaction });
  // Frames cut from a video carry their time: order by it. Stacks from files go by natural name order (frame_2 before frame_10),
  // and so does a stack with any still without a time: the times a removal wrote on the others (Decision 56) must not put a
  // still uploaded afterwards behind them all, as when a frame is replaced while a stack streams in (Decision 61).
  const allTimed = frames.every((f) => f.timeS !== null && Number.isFinite(f.timeS));
  const ordered = allTimed ? orderBy(frames, [(f) => f.timeS, (f) => f.originalName], ["asc", "asc"]) : orderBy(frames, [(f) => f.originalName], ["asc"]);
  for (let i = 0; i < ordered.length; i++) {
    if (ordered[i]!.position !== i) await Frame.update({ position: i }, { where: { id: ordered[i]!.id }, transaction });
  }
  return ordered.length;
}

/**
 * Stores one checked image as a frame of the run: a ZIP entry's bytes, or a staged upload that the
 * store takes (renamed into the run's folder, or streamed to the bucket). Duplicate content is
 * not stored twice, but puts back a file that has gone missing.
 */
async function addFrame(run: Run, originalName: string, source: Buffer | StagedFile, timeS: number | null): Promise<AcceptedFrame> {
  const staged = Buffer.isBuffer(source) ? null : source;
  if (staged && staged.sizeBytes > uploadLimits.maxFrameBytes) throw frameTooLarge(staged.sizeBytes);
  // At most maxFrameBytes, so holding one frame is bounded.
  const data = staged ? await fsp.readFile(staged.path) : (source as Buffer);
  const info = await inspectFrame(data);
  const sha256 = crypto.createHash("sha256").update(data).digest("hex");
  const existing = await Frame.findOne({ where: { runId: run.id, sha256 } });
  if (existing) return { name: originalName, frameId: existing.id, position: existing.position, duplicate: true, ...(await restoreMissing(existing, data, info.thumb)) };

  const storedName = generatedName(extFor[info.format]!);
  const thumbName = storedName.replace(/\.[a-z]+$/, ".thumb.webp");
  const key = runKey(run.id, storedName);
  const thumbKey = runKey(run.id, thumbName);
  const objects = store();
  if (staged) await objects.putFile(key, staged.path, frameContentTypes[info.format]);
  else await objects.put(key, data, frameContentTypes[info.format]);
  try {
    await objects.put(thumbKey, info.thumb, "image/webp");
  } catch (err) {
    await objects.delete(key).catch(() => undefined);
    throw err;
  }
  try {
    return await sequelize.transaction(async (transaction) => {
      // Frames of one run take turns from here: each counts and numbers the frames the previous one left.
      await run.reload(locking(transaction));
      if (run.frameCount >= uploadLimits.maxFramesPerRun) {
        throw new UploadError(`This run already has ${uploadLimits.maxFramesPerRun} frames, the most one run may hold.`, 413, "too_many_frames");
      }
      if (run.frameWidthPx && (run.frameWidthPx !== info.width || run.frameHeightPx !== info.height)) {
        throw new UploadError(`This frame is ${info.width} × ${info.height} px but the stack's frames are ${run.frameWidthPx} × ${run.frameHeightPx} px. One stack has one frame size.`, 422, "frame_size_mismatch");
      }
      const frame = await Frame.create(
        { runId: run.id, position: run.frameCount, originalName, storedName, thumbName, sha256, format: info.format, widthPx: info.width, heightPx: info.height, sizeBytes: data.length, timeS },
        { transaction },
      );
      const count = await renumber(run.id, transaction);
      await run.update({ frameCount: count, frameWidthPx: info.width, frameHeightPx: info.height }, { transaction });
      if (run.state === "draft") await setRunState(run, "frames_in", null, transaction);
      await frame.reload({ transaction });
      return { name: originalName, frameId: frame.id, position: frame.position, duplicate: false };
    });
  } catch (err) {
    await objects.delete(key).catch(() => undefined);
    await objects.delete(thumbKey).catch(() => undefined);
    // Two uploads of the same content racing each other: the unique index decides, the loser is a duplicate.
    if (err instanceof Error && err.name === "SequelizeUniqueConstraintError") {
      const winner = await Frame.findOne({ where: { runId: run.id, sha256 } });
      if (winner) return { name: originalName, frameId: winner.id, position: winner.position, duplicate: true };
    }
    throw err;
  }
}

/**
 * The same content sent again for a frame whose stored file (or thumbnail) has gone missing from
 * storage puts it back under the frame's own name, so bringing the frames again repairs a run.
 */
async function restoreMissing(frame: Frame, data: Buffer, thumb: Buffer): Promise<{ restored?: true }> {
  const objects = store();
  // Under the frame's own key: a correction's shared frame is put back where both runs read it.
  const key = frameKey(frame);
  const thumbKey = frameThumbKey(frame);
  const [main, small] = await Promise.all([objects.head(key), thumbKey ? objects.head(thumbKey) : null]);
  let restored = false;
  if (!main) {
    await objects.put(key, data, frameContentTypes[frame.format]);
    restored = true;
  }
  if (thumbKey && !small) {
    await objects.put(thumbKey, thumb, "image/webp");
    restored = true;
  }
  return restored ? { restored } : {};
}

function isZip(head: Buffer) {
  return head.length >= 4 && head[0] === 0x50 && head[1] === 0x4b && (head[2] === 0x03 || head[2] === 0x05);
}

/** Opened from the staged file: yauzl reads the central directory and each entry from disk. */
function openZip(file: string): Promise<yauzl.ZipFile> {
  return new Promise((resolve, reject) =>
    yauzl.open(file, { lazyEntries: true, autoClose: false, validateEntrySizes: true, strictFileNames: false }, (err, zip) => (err || !zip ? reject(err ?? new Error("The ZIP archive could not be opened.")) : resolve(zip))),
  );
}

function readEntry(zip: yauzl.ZipFile, entry: yauzl.Entry, budget: { left: number }): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    zip.openReadStream(entry, (err, stream) => {
      if (err || !stream) return reject(err ?? new Error("unreadable entry"));
      const chunks: Buffer[] = [];
      let size = 0;
      stream.on("data", (chunk: Buffer) => {
        size += chunk.length;
        budget.left -= chunk.length;
        // Counted while inflating, so a bomb is stopped by what it really unpacks to, not what it declares.
        if (size > uploadLimits.maxFrameBytes || budget.left < 0) {
          stream.destroy(new UploadError("The ZIP unpacks to more than Tankside accepts (a frame over 30 MB or over 2 GB in all).", 413, "zip_too_large"));
          return;
        }
        chunks.push(chunk);
      });
      stream.on("error", reject);
      stream.on("end", () => resolve(Buffer.concat(chunks)));
    });
  });
}

function safeEntryPath(name: string) {
  return !(name.startsWith("/") || name.startsWith("\\") || /^[a-zA-Z]:/.test(name) || name.split(/[\\/]/).includes(".."));
}

async function addZip(run: Run, staged: StagedFile, result: FrameUploadResult, zipName: string) {
  if (staged.sizeBytes > uploadLimits.maxZipBytes) throw new UploadError(`The ZIP is over ${uploadLimits.maxZipBytes / 1024 / 1024} MB.`, 413, "too_large");
  let zip: yauzl.ZipFile;
  try {
    zip = await openZip(staged.path);
  } catch {
    throw new UploadError("This ZIP is damaged and cannot be opened.", 422, "damaged_zip");
  }
  try {
    await addZipEntries(run, staged, zip, result, zipName);
  } finally {
    zip.close();
  }
}

async function addZipEntries(run: Run, staged: StagedFile, zip: yauzl.ZipFile, result: FrameUploadResult, zipName: string) {
  if (zip.entryCount > uploadLimits.maxZipEntries) {
    throw new UploadError(`The ZIP has ${zip.entryCount} entries; at most ${uploadLimits.maxZipEntries} are accepted.`, 413, "zip_too_many_entries");
  }
  const entries: yauzl.Entry[] = [];
  await new Promise<void>((resolve, reject) => {
    zip.on("entry", (e: yauzl.Entry) => {
      entries.push(e);
      zip.readEntry();
    });
    zip.on("end", resolve);
    zip.on("error", reject);
    zip.readEntry();
  }).catch((err: Error) => {
    // yauzl itself refuses entry names that are absolute or climb out with "..".
    if (/relative path|absolute path|invalid characters/i.test(err.message)) {
      throw new UploadError(`The ZIP has entries that point outside it (${err.message.replace(/^.*: /, "")}); nothing was taken from it.`, 422, "zip_unsafe_path");
    }
    throw new UploadError("This ZIP is damaged and cannot be read to the end.", 422, "damaged_zip");
  });
  const declared = entries.reduce((s, e) => s + e.uncompressedSize, 0);
  if (declared > uploadLimits.maxZipUnpackedBytes) {
    throw new UploadError("The ZIP unpacks to more than 2 GB; Tankside refuses it.", 413, "zip_too_large");
  }
  const unsafe = entries.filter((e) => !safeEntryPath(e.fileName));
  if (unsafe.length) {
    throw new UploadError(`The ZIP has entries that point outside it (${unsafe[0]!.fileName}); nothing was taken from it.`, 422, "zip_unsafe_path");
  }
  const budget = { left: uploadLimits.maxZipUnpackedBytes };
  const reopened = await openZip(staged.path);
  try {
    await addEntries(run, reopened, entries, budget, result, zipName);
  } finally {
    reopened.close();
  }
}

async function addEntries(run: Run, reopened: yauzl.ZipFile, entries: yauzl.Entry[], budget: { left: number }, result: FrameUploadResult, zipName: string) {
  const files = entries.filter((e) => !e.fileName.endsWith("/") && !/(^|\/)(__MACOSX|\.)/.test(e.fileName));
  const byName = new Map(files.map((e) => [e.fileName, e]));
  const wanted = orderBy([...byName.keys()]);
  for (const name of wanted) {
    const entry = byName.get(name)!;
    let unpacked = false;
    try {
      const buf = await readEntry(reopened, entry, budget);
      unpacked = true;
      result.accepted.push(await addFrame(run, `${cleanName(name)}`, buf, null));
    } catch (err) {
      if (err instanceof UploadError) {
        if (err.code === "zip_too_large" || err.code === "too_many_frames") {
          result.rejected.push({ name: `${zipName}: ${name}`, message: err.message });
          break;
        }
        result.rejected.push({ name: `${zipName}: ${name}`, message: err.message });
      } else if (unpacked) {
        // Storing the frame failed (database, disk): the server's fault, not the archive's.
        reopened.close();
        throw err;
      } else {
        // yauzl checks each entry against the sizes the ZIP declares; a mismatch means a damaged or forged archive.
        result.rejected.push({ name: `${zipName}: ${name}`, message: "This entry is damaged or does not match the size the ZIP declares for it." });
      }
    }
  }
}

/**
 * Takes one uploaded file (an image or a ZIP of images) for a run: a staged upload, checked from
 * disk, or a File in memory (seed data, tests), staged first so both take the same path. A staged
 * image that is accepted goes to the store under `runs/<run id>/`; whatever this function staged
 * itself is removed again.
 */
export async function receiveFrameFile(run: Run, upload: StagedFile | File, timeS: number | null): Promise<FrameUploadResult> {
  const staged = upload instanceof File ? await stageBytes(upload.name, new Uint8Array(await upload.arrayBuffer())) : upload;
  try {
    const name = cleanName(staged.name);
    const result: FrameUploadResult = { accepted: [], rejected: [], frameCount: 0 };
    if (isZip(await readHead(staged, 4))) await addZip(run, staged, result, name);
    else result.accepted.push(await addFrame(run, name, staged, timeS));
    await run.reload();
    result.frameCount = run.frameCount;
    return result;
  } finally {
    if (upload instanceof File) await discardStaged(staged);
  }
}

import { Readable } from "node:stream";
import type { Route } from "./+types/calibration-attachment";
import { requireCapability } from "~/.server/auth/permissions";
import { apiError, parseId } from "~/.server/http";
import { StorageUnavailableError } from "~/.server/storage";
import { storageUnavailable } from "~/.server/storage/respond";
import { readCalibrationAttachment } from "~/.server/uploads/calibration-attachments";

/** GET /api/v1/calibrations/:id/attachments/:attachmentId — the stored file, for signed-in people only. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireCapability(request, "read_calibrations");
  const calibrationId = parseId(request, params.id, "That attachment");
  const attachmentId = parseId(request, params.attachmentId, "That attachment");
  let found;
  try {
    found = await readCalibrationAttachment(calibrationId, attachmentId);
  } catch (err) {
    if (err instanceof StorageUnavailableError) return storageUnavailable(err);
    throw err;
  }
  if (!found) return apiError(404, "not_found", "No such attachment.");
  if (!found.file) {
    return apiError(404, "file_missing", `The file of attachment "${found.row.originalName}" is missing from storage. Attach it to the record again.`);
  }
  const inline = found.row.contentType.startsWith("image/") || found.row.contentType === "application/pdf";
  const safeName = found.row.originalName.replace(/[^\w.\- ]+/g, "_");
  return new Response(Readable.toWeb(found.file.body) as ReadableStream, {
    headers: {
      "Content-Type": found.row.contentType,
      "Content-Length": String(found.file.size),
      "Content-Disposition": `${inline ? "inline" : "attachment"}; filename="${safeName}"`,
      "Cache-Control": "private, max-age=3600",
      // A stored file is only ever shown as itself, never run as a page.
      "Content-Security-Policy": "default-src 'none'; img-src 'self'; style-src 'unsafe-inline'; sandbox",
    },
  });
}

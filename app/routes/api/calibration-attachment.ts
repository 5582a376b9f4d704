import type { Route } from "./+types/calibration-attachment";
import { requireCapability } from "~/.server/auth/permissions";
import { apiError, parseId } from "~/.server/http";
import { storedFileResponse } from "~/.server/storage/respond";
import { findCalibrationAttachment, removeCalibrationAttachment } from "~/.server/uploads/calibration-attachments";
import { getCalibration } from "~/.server/calibrations";
import { serializeCalibrations } from "~/.server/calibration-views";
import { methodNotAllowed, refusalResponse } from "~/.server/api-responses";

/** GET /api/v1/calibrations/:id/attachments/:attachmentId — the stored file, for signed-in people only. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireCapability(request, "read_calibrations");
  const found = await findCalibrationAttachment(parseId(request, params.id, "That attachment"), parseId(request, params.attachmentId, "That attachment"));
  if (!found) return apiError(404, "not_found", "No such attachment.");
  const inline = found.row.contentType.startsWith("image/") || found.row.contentType === "application/pdf";
  const safeName = found.row.originalName.replace(/[^\w.\- ]+/g, "_");
  return storedFileResponse(request, found.key, {
    contentType: found.row.contentType,
    missing: `The file of attachment "${found.row.originalName}" is missing from storage. Attach it to the record again.`,
    headers: {
      "Content-Disposition": `${inline ? "inline" : "attachment"}; filename="${safeName}"`,
      "Cache-Control": "private, max-age=3600",
      // A stored file is only ever shown as itself, never run as a page.
      "Content-Security-Policy": "default-src 'none'; img-src 'self'; style-src 'unsafe-inline'; sandbox",
    },
  });
}

/** DELETE /api/v1/calibrations/:id/attachments/:attachmentId — takes a file off a record not signed off; answers with the record. */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireCapability(request, "record_calibration");
  if (request.method !== "DELETE") return methodNotAllowed("GET, DELETE");
  const id = parseId(request, params.id, "That calibration record");
  try {
    await removeCalibrationAttachment(id, parseId(request, params.attachmentId, "That attachment"), user);
    const cal = await getCalibration(id);
    if (!cal) return apiError(404, "not_found", "That calibration record does not exist.");
    const [view] = await serializeCalibrations([cal]);
    return Response.json(view);
  } catch (err) {
    return refusalResponse(err);
  }
}

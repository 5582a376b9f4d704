import type { Route } from "./+types/calibration-attachments";
import { requireCapability } from "~/.server/auth/permissions";
import { assertCalibrationEditable } from "~/.server/calibrations";
import { apiError, parseId } from "~/.server/http";
import { addCalibrationAttachment, MAX_ATTACHMENT_BYTES } from "~/.server/uploads/calibration-attachments";
import { methodNotAllowed, refusalResponse } from "~/.server/api-responses";
import { UploadError, withMultipartUpload } from "~/.server/uploads/staging";
import { StorageUnavailableError } from "~/.server/storage";
import { storageUnavailable } from "~/.server/storage/respond";
import type { CalibrationAttachmentView } from "~/.server/openapi/responses/calibrations";

/** POST /api/v1/calibrations/:id/attachments (multipart, field "file") — Uppy's XHR upload lands here. */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireCapability(request, "record_calibration");
  if (request.method !== "POST") return methodNotAllowed("POST");
  const limits = {
    maxFileBytes: MAX_ATTACHMENT_BYTES,
    tooLarge: new UploadError("Attachments can be at most 20 MB.", 413, "file_too_large"),
    unreadable: new UploadError("Send the file as multipart/form-data in a field named file.", 400, "invalid_upload"),
  };
  const id = parseId(request, params.id, "That calibration record");
  try {
    // Refused before a byte of the file is read when the record cannot take attachments from this person.
    await assertCalibrationEditable(id, user);
    // Streamed to a temporary file and checked from there; it is gone again when this returns.
    return await withMultipartUpload(request, limits, async ({ file }) => {
      if (!file) return apiError(400, "invalid_upload", "Send the file in a field named file.");
      const row = await addCalibrationAttachment(id, file, user);
      const view: CalibrationAttachmentView = {
        id: row.id,
        originalName: row.originalName,
        contentType: row.contentType,
        sizeBytes: row.sizeBytes,
        url: `/api/v1/calibrations/${id}/attachments/${row.id}`,
      };
      return Response.json(view, { status: 201 });
    });
  } catch (err) {
    if (err instanceof UploadError) return apiError(err.status, err.code, err.message);
    if (err instanceof StorageUnavailableError) return storageUnavailable(err);
    return refusalResponse(err);
  }
}

export function loader() {
  return methodNotAllowed("POST");
}

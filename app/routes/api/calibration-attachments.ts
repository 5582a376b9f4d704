import type { Route } from "./+types/calibration-attachments";
import { requireCapability } from "~/.server/auth/permissions";
import { apiError, parseId } from "~/.server/http";
import { addCalibrationAttachment, MAX_ATTACHMENT_BYTES } from "~/.server/uploads/calibration-attachments";
import { methodNotAllowed, refusalResponse } from "~/.server/api-responses";

/** POST /api/v1/calibrations/:id/attachments (multipart, field "file") — Uppy's XHR upload lands here. */
export async function action({ request, params }: Route.ActionArgs) {
  const user = await requireCapability(request, "record_calibration");
  if (request.method !== "POST") return methodNotAllowed("POST");
  const id = parseId(request, params.id, "That calibration record");
  const length = Number(request.headers.get("Content-Length") ?? 0);
  if (length > MAX_ATTACHMENT_BYTES + 64 * 1024) return apiError(413, "file_too_large", "Attachments can be at most 20 MB.");
  let form: FormData;
  try {
    form = await request.formData();
  } catch {
    return apiError(400, "invalid_upload", "Send the file as multipart/form-data in a field named file.");
  }
  const file = form.get("file");
  if (!(file instanceof File)) return apiError(400, "invalid_upload", "Send the file in a field named file.");
  try {
    const row = await addCalibrationAttachment(id, { name: file.name, bytes: Buffer.from(await file.arrayBuffer()) }, user);
    return Response.json(
      { id: row.id, originalName: row.originalName, contentType: row.contentType, sizeBytes: row.sizeBytes, url: `/api/v1/calibrations/${id}/attachments/${row.id}` },
      { status: 201 },
    );
  } catch (err) {
    return refusalResponse(err);
  }
}

export function loader() {
  return methodNotAllowed("POST");
}

import type { Route } from "./+types/calibration-attachment";
import { requireCapability } from "~/.server/auth/permissions";
import { apiError, parseId } from "~/.server/http";
import { readCalibrationAttachment } from "~/.server/uploads/calibration-attachments";

/** GET /api/v1/calibrations/:id/attachments/:attachmentId — the stored file, for signed-in people only. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireCapability(request, "read_calibrations");
  const found = await readCalibrationAttachment(parseId(request, params.id, "That attachment"), parseId(request, params.attachmentId, "That attachment")).catch(() => null);
  if (!found) return apiError(404, "not_found", "No such attachment.");
  const inline = found.row.contentType.startsWith("image/") || found.row.contentType === "application/pdf";
  const safeName = found.row.originalName.replace(/[^\w.\- ]+/g, "_");
  return new Response(new Uint8Array(found.bytes), {
    headers: {
      "Content-Type": found.row.contentType,
      "Content-Length": String(found.bytes.length),
      "Content-Disposition": `${inline ? "inline" : "attachment"}; filename="${safeName}"`,
      "Cache-Control": "private, max-age=3600",
      // A stored file is only ever shown as itself, never run as a page.
      "Content-Security-Policy": "default-src 'none'; img-src 'self'; style-src 'unsafe-inline'; sandbox",
    },
  });
}

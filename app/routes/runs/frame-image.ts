import type { Route } from "./+types/frame-image";
import { requireUser } from "~/.server/auth/permissions";
import { Frame } from "~/.server/db";
import { notFound, parseId } from "~/.server/http";
import { frameKey, frameThumbKey } from "~/.server/storage";
import { storedFileResponse } from "~/.server/storage/respond";
import { frameContentTypes } from "~/.server/uploads/frames";

/**
 * A frame or its thumbnail, for signed-in people only, streamed from storage through the server.
 * ?size=thumb gives the small WebP made at upload. A file missing from storage is a 404 that says
 * which frame.
 */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const frame = await Frame.findOne({ where: { id: parseId(request, params.frameId, "That frame"), runId: parseId(request, params.id, "That run") } });
  if (!frame) throw notFound(request, "That frame");
  // A correction's frame may name a file kept under the run it corrects: the frame's own key says where.
  const thumbKey = new URL(request.url).searchParams.get("size") === "thumb" ? frameThumbKey(frame) : null;
  const thumb = thumbKey !== null;
  const what = `${thumb ? "the thumbnail of " : ""}frame ${frame.position + 1} (${frame.originalName})`;
  return storedFileResponse(request, thumbKey ?? frameKey(frame), {
    contentType: thumb ? "image/webp" : (frameContentTypes[frame.format] ?? "application/octet-stream"),
    missing: `The file of ${what} is missing from storage. Bring the same frame again to put it back.`,
    // Stored frames never change under the same id.
    headers: { "Cache-Control": "private, max-age=86400, immutable" },
  });
}

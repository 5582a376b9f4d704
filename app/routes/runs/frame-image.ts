import fs from "node:fs";
import { Readable } from "node:stream";
import type { Route } from "./+types/frame-image";
import { requireUser } from "~/.server/auth/permissions";
import { Frame } from "~/.server/db";
import { notFound, parseId } from "~/.server/http";
import { runFilePath } from "~/.server/uploads/storage";

const types: Record<string, string> = { jpeg: "image/jpeg", png: "image/png", tiff: "image/tiff", webp: "image/webp" };

/** A frame or its thumbnail, for signed-in people only. ?size=thumb gives the small WebP made at upload. */
export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  const frame = await Frame.findOne({ where: { id: parseId(request, params.frameId, "That frame"), runId: parseId(request, params.id, "That run") } });
  if (!frame) throw notFound(request, "That frame");
  const thumb = new URL(request.url).searchParams.get("size") === "thumb" && frame.thumbName;
  const file = runFilePath(frame.runId, thumb ? frame.thumbName! : frame.storedName);
  if (!fs.existsSync(file)) throw notFound(request, "That frame's file");
  const stat = fs.statSync(file);
  return new Response(Readable.toWeb(fs.createReadStream(file)) as ReadableStream, {
    headers: {
      "Content-Type": thumb ? "image/webp" : (types[frame.format] ?? "application/octet-stream"),
      "Content-Length": String(stat.size),
      // Stored frames never change under the same id.
      "Cache-Control": "private, max-age=86400, immutable",
    },
  });
}

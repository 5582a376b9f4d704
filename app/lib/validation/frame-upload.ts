import { z } from "zod";
import { frameUploadKinds } from "../upload-limits";

/** The query of a frame upload: what the body is, one frame unless it says a ZIP. */
export const frameUploadQuerySchema = z.strictObject({
  kind: z.enum(frameUploadKinds, { error: "kind is frame (one image, the default) or zip (a ZIP of images)." }).default("frame"),
});

export const frameUploadQueryKeys: ReadonlySet<string> = new Set(["kind"]);

import { z } from "zod";
import { evenWithFieldErrors, strictNumber } from "./fields";

const px = (what: string) =>
  strictNumber(z.coerce.number({ error: `${what} must be a number of pixels.` }).refine(Number.isFinite, `${what} must be a number of pixels.`));
const optionalPx = (what: string) => z.preprocess((v) => (v === "" || v === null ? undefined : v), px(what).optional());

/** A view setup in image pixels; the frame size is checked on the server. */
export const viewSetupSchema = z
  .object({
    centreX: px("The centre's column"),
    centreY: px("The centre's row"),
    edgeX: optionalPx("The tank edge's centre column"),
    edgeY: optionalPx("The tank edge's centre row"),
    edgeR: optionalPx("The tank edge's radius"),
    scaleLengthCm: strictNumber(
      z.preprocess(
        (v) => (v === "" || v === null ? undefined : v),
        z.coerce.number().positive("The known length must be more than 0 cm.").max(500, "A known length over 5 m will not fit in a tank.").optional(),
      ),
    ),
    scaleLengthPx: optionalPx("The scale's length"),
    scalePoints: z.string().max(500).optional(),
    mirrored: z.preprocess((v) => v === "on" || v === "true", z.boolean()),
    rateMarkX: optionalPx("The table mark's column"),
    rateMarkY: optionalPx("The table mark's row"),
  })
  .superRefine((v, ctx) => {
    const edge = [v.edgeX, v.edgeY, v.edgeR];
    if (edge.some((e) => e !== undefined) && edge.some((e) => e === undefined)) {
      ctx.addIssue({ code: "custom", path: ["edgeR"], message: "Mark the tank edge with three rim points (or clear it)." });
    }
    if (v.edgeR !== undefined && v.edgeR <= 5)
      ctx.addIssue({ code: "custom", path: ["edgeR"], message: "The tank edge is too small; mark three points on the rim." });
    if ((v.rateMarkX === undefined) !== (v.rateMarkY === undefined)) {
      ctx.addIssue({ code: "custom", path: ["rateMarkX"], message: "Give both the column and the row of the mark on the table (or clear it)." });
    }
    if ((v.scaleLengthCm === undefined) !== (v.scaleLengthPx === undefined)) {
      ctx.addIssue({ code: "custom", path: ["scaleLengthCm"], message: "For a scale, mark two points and give the length between them in cm." });
    }
    if (v.scaleLengthPx !== undefined && v.scaleLengthPx < 10) {
      ctx.addIssue({ code: "custom", path: ["scaleLengthCm"], message: "The two scale points are less than 10 px apart; pick points further apart." });
    }
  }, evenWithFieldErrors);

export type ViewSetupInput = z.infer<typeof viewSetupSchema>;

import { z } from "zod";
import { evenWithFieldErrors, strictNumber } from "./fields";
import { GeometryError } from "../projective/geometry-error";
import { completeKnownPoints, knownPointsProblem } from "../projective/known-points";
import { parseKnownPointEntries, parseRimPoints } from "../projective/stored-marks";
import { viewCorrection, type TiltMarks } from "../projective/view-correction";

const marksText = z.preprocess((v) => (v === "" || v === null ? undefined : v), z.string().max(8000, "Too many points: keep to a few dozen.").optional());

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
    /** A camera not quite overhead (Decision 69): JSON [{x, y}], five or more points on the tank's edge at the water's surface. */
    rimPoints: marksText,
    /** …or JSON [{x, y, tableXCm, tableYCm}], four or more points whose place on the table is known (cm from the axis). */
    knownPoints: marksText,
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
    const rim = v.rimPoints === undefined ? undefined : parseRimPoints(v.rimPoints);
    const entries = v.knownPoints === undefined ? undefined : parseKnownPointEntries(v.knownPoints);
    if (rim === null) ctx.addIssue({ code: "custom", path: ["rimPoints"], message: "Each rim point needs a column and a row in pixels." });
    if (entries === null) {
      ctx.addIssue({ code: "custom", path: ["knownPoints"], message: "Each known point needs its column and row in pixels and its place on the table in cm." });
    }
    const problem = entries?.length ? knownPointsProblem(entries) : null;
    const known = entries ? completeKnownPoints(entries) : undefined;
    if (rim?.length && entries?.length) {
      ctx.addIssue({
        code: "custom",
        path: ["knownPoints"],
        message: "Correct the tilt from the rim points or from known points, not both: clear one of them.",
      });
    } else if (problem) {
      ctx.addIssue({ code: "custom", path: ["knownPoints"], message: problem });
    } else if (Number.isFinite(v.centreX) && Number.isFinite(v.centreY) && (rim?.length || known?.length)) {
      const marks: TiltMarks = rim?.length ? { kind: "rim", points: rim } : { kind: "known", points: known ?? [] };
      try {
        viewCorrection(marks, { x: v.centreX, y: v.centreY }, v.mirrored);
      } catch (error) {
        if (!(error instanceof GeometryError)) throw error;
        ctx.addIssue({ code: "custom", path: [marks.kind === "rim" ? "rimPoints" : "knownPoints"], message: error.message });
      }
    }
    if (v.scaleLengthPx !== undefined && v.scaleLengthPx < 10) {
      ctx.addIssue({ code: "custom", path: ["scaleLengthCm"], message: "The two scale points are less than 10 px apart; pick points further apart." });
    }
  }, evenWithFieldErrors);

export type ViewSetupInput = z.infer<typeof viewSetupSchema>;

import { z } from "zod";

const px = (what: string) => z.number({ error: `${what} must be a number of pixels.` });
const point = (what: string) => z.strictObject({ x: px(`${what}'s column`), y: px(`${what}'s row`) });
const cm = (what: string) => z.number({ error: `${what} must be a number of cm.` });

/**
 * PUT /api/v1/runs/{id}/view-setup: the whole view setup as JSON, in image pixels (what the setup
 * page's form sends, with its marks as lists instead of text). Unknown fields are refused; the
 * checks of the marks themselves are the form's (viewSetupSchema), run on what this gives.
 */
export const viewSetupApiSchema = z.strictObject({
  centre: point("The rotation centre"),
  tankEdge: z.strictObject({ x: px("The tank edge's centre column"), y: px("The tank edge's centre row"), r: px("The tank edge's radius") }).nullish(),
  scale: z
    .strictObject({
      points: z.tuple([point("The scale's first end"), point("The scale's second end")]),
      lengthCm: cm("The known length"),
    })
    .nullish(),
  mirrored: z.boolean().optional(),
  rateMark: point("The mark on the table").nullish(),
  /** A camera not quite overhead: five or more points on the tank's edge at the water's surface… */
  rimPoints: z.array(point("A rim point")).max(200, "Keep to 200 rim points.").nullish(),
  /** …or four or more points whose place on the table is known, cm from the rotation axis. */
  knownPoints: z
    .array(
      z.strictObject({
        x: px("A known point's column"),
        y: px("A known point's row"),
        tableXCm: cm("A known point's table x"),
        tableYCm: cm("A known point's table y"),
      }),
    )
    .max(200, "Keep to 200 known points.")
    .nullish(),
});
export type ViewSetupApiBody = z.infer<typeof viewSetupApiSchema>;

/** The body in the form's fields, for viewSetupSchema to check as it checks the page's form. */
export function formFieldsOfApiBody(b: ViewSetupApiBody): Record<string, string> {
  const text = (n: number | undefined) => (n === undefined ? "" : String(n));
  const scalePx = b.scale ? Math.hypot(b.scale.points[0].x - b.scale.points[1].x, b.scale.points[0].y - b.scale.points[1].y) : undefined;
  return {
    centreX: text(b.centre.x),
    centreY: text(b.centre.y),
    edgeX: text(b.tankEdge?.x),
    edgeY: text(b.tankEdge?.y),
    edgeR: text(b.tankEdge?.r),
    scaleLengthCm: text(b.scale?.lengthCm),
    scaleLengthPx: text(scalePx),
    scalePoints: b.scale ? JSON.stringify(b.scale.points) : "",
    mirrored: b.mirrored ? "true" : "",
    rateMarkX: text(b.rateMark?.x),
    rateMarkY: text(b.rateMark?.y),
    rimPoints: b.rimPoints?.length ? JSON.stringify(b.rimPoints) : "",
    knownPoints: b.knownPoints?.length ? JSON.stringify(b.knownPoints) : "",
  };
}

/** The API's name for a form field a check put its message on. */
export const apiFieldOfFormField: Record<string, string> = {
  centreX: "centre",
  centreY: "centre",
  edgeX: "tankEdge",
  edgeY: "tankEdge",
  edgeR: "tankEdge",
  scaleLengthCm: "scale",
  scaleLengthPx: "scale",
  scalePoints: "scale",
  rateMarkX: "rateMark",
  rateMarkY: "rateMark",
  rimPoints: "rimPoints",
  knownPoints: "knownPoints",
};

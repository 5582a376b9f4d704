import { z } from "zod";
import { strictNumber } from "./fields";

/**
 * Which frames to remove from a run's stack: a range of positions (0-based, both ends included,
 * as GET …/frames numbers them; one frame is a range of one) or the whole stack (`all: true`).
 * `frameCount` is the number of frames the person saw: when the stack has changed since (an
 * upload renumbered it), the removal is refused rather than taking other frames than those chosen.
 */
const whole = (what: string) =>
  strictNumber(
    z.coerce
      .number({ message: `The ${what} is a number.` })
      .int(`The ${what} is a whole number.`)
      .min(0, `The ${what} is 0 or more.`),
  );

export const frameRemovalSchema = z
  .strictObject({
    from: whole("first position").optional(),
    to: whole("last position").optional(),
    all: z.literal(true, { message: "Send all: true to remove the whole stack, or from and to for a range." }).optional(),
    frameCount: whole("frame count").optional(),
  })
  .superRefine((v, ctx) => {
    if (v.all) {
      if (v.from !== undefined || v.to !== undefined)
        ctx.addIssue({ code: "custom", path: ["all"], message: "Send either all: true or a range (from, to), not both." });
      return;
    }
    if (v.from === undefined) ctx.addIssue({ code: "custom", path: ["from"], message: "Give the first frame to remove (from), or all: true." });
    if (v.to === undefined) ctx.addIssue({ code: "custom", path: ["to"], message: "Give the last frame to remove (to); the same as from for one frame." });
    if (v.from !== undefined && v.to !== undefined && v.to < v.from)
      ctx.addIssue({ code: "custom", path: ["to"], message: "The last frame of the range comes before the first." });
  });
export type FrameRemovalInput = z.infer<typeof frameRemovalSchema>;

/** The selection a valid input names. */
export type FrameSelection = { all: true } | { from: number; to: number };
export function selectionOf(v: FrameRemovalInput): FrameSelection {
  return v.all ? { all: true } : { from: v.from ?? 0, to: v.to ?? 0 };
}

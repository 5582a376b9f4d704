/** The setup editor's tools: what a click on the frame places. */
export type Tool = "centre" | "rim" | "scale" | "mark" | "tilt" | "known";

export const tools: readonly Tool[] = ["centre", "rim", "scale", "mark", "tilt", "known"];

export const toolText: Record<Tool, string> = {
  centre: "Click the rotation centre (the table's axis).",
  rim: "Click three points on the tank's inner rim; the circle through them is the region searched.",
  scale: "Click the two ends of a known length (a ruler or marks on the tank floor).",
  mark: "Click a small, distinct mark on the turntable away from the centre (a lab-fixed camera only): the table's rate is read from how it turns.",
  tilt: "Click five or more points where the water meets the tank wall, spread all round: each click adds one. Their ellipse shows how far the camera leans.",
  known:
    "Click four or more marks whose place on the table you measured, spread around the tank, then type each one's position in the list. Zoom in to click each mark's middle: at a few degrees of lean, a click half a pixel off moves the reading by a degree or more.",
};

export const toolLabel: Record<Tool, string> = {
  centre: "Rotation centre",
  rim: "Tank edge (3 rim points)",
  scale: "Scale (2 points)",
  mark: "Mark on the table",
  tilt: "Tilt (5+ rim points)",
  known: "Tilt (4+ known points)",
};

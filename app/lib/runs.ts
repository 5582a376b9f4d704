export const runStates = ["draft", "frames_in", "tracked", "checked", "signed_off"] as const;
export type RunState = (typeof runStates)[number];
export const verdicts = ["agrees", "disagrees", "inconclusive"] as const;
export type Verdict = (typeof verdicts)[number];

export const runStateLabels: Record<RunState, string> = {
  draft: "Draft",
  frames_in: "Frames in",
  tracked: "Tracked",
  checked: "Checked",
  signed_off: "Signed off",
};

export const directionLabels = { ccw: "Counterclockwise (seen from above)", cw: "Clockwise (seen from above)" } as const;
export const cameraModeLabels = { rotating: "Co-rotating (rides on the table)", lab: "Lab-fixed (stands in the room)" } as const;
export const tracerLabels = { float: "Float", dye: "Dye" } as const;

/** A run's label as people say it: R-0042. */
export function runLabel(id: number) {
  return `R-${String(id).padStart(4, "0")}`;
}

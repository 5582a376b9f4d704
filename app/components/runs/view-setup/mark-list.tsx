import { formatFixed } from "~/lib/number-format";
import type { Point } from "~/lib/geometry";
import type { SetupMark, SetupValues } from "~/lib/setup-marks";

/** Every mark as a radio button: the chosen one is moved by the arrow keys and kept in view when zooming. */
export function MarkList({
  v,
  marks,
  selected,
  onSelect,
}: {
  v: SetupValues;
  marks: readonly SetupMark[];
  selected: string;
  onSelect: (id: string, at: Point | null) => void;
}) {
  return (
    <fieldset className="mt-3 flex flex-col gap-1">
      <legend className="mb-1 font-bold">Mark moved by the arrow keys</legend>
      {marks.map((m) => {
        const at = m.at(v);
        return (
          <label key={m.id} className={`flex min-h-12 items-center gap-3 ${at ? "" : "text-muted"}`}>
            <input
              type="radio"
              name="nudgeMark"
              value={m.id}
              checked={selected === m.id && at !== null}
              disabled={!at}
              onChange={() => onSelect(m.id, at)}
              className="size-6"
            />
            <span>
              {m.label}
              <span className="text-muted" data-testid={`mark-${m.id}`}>
                {at ? ` at ${formatFixed(at.x, 1)}, ${formatFixed(at.y, 1)} px` : " (not placed yet)"}
              </span>
            </span>
          </label>
        );
      })}
      <p id="setup-keys" className="text-sm text-muted">
        Choose a mark, then click the frame (or move to it with Tab) and use the arrow keys: 1 px a press, 10 px with Shift; + and − zoom.
      </p>
    </fieldset>
  );
}

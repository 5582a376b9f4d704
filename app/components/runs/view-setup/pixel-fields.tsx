import { Button } from "~/components/ui/button";
import { TextField } from "~/components/ui/field";
import { distance } from "~/lib/geometry";
import { formatFixed } from "~/lib/number-format";
import type { SetupValues } from "~/lib/setup-marks";
import { positive, type useNumberFields } from "./use-number-fields";

type NumberField = ReturnType<typeof useNumberFields>["numberField"];

/** The rotation centre, the tank edge, the scale and the mark on the table as numbers, each following its mark on the frame. */
export function PixelFields({ v, setV, numberField }: { v: SetupValues; setV: (v: SetupValues) => void; numberField: NumberField }) {
  const scalePx = v.scalePoints ? distance(v.scalePoints[0], v.scalePoints[1]) : null;
  const pxPerM = scalePx && v.scaleLengthCm && v.scaleLengthCm > 0 ? scalePx / (v.scaleLengthCm / 100) : null;
  return (
    <>
      <fieldset className="grid grid-cols-2 gap-3">
        <legend className="mb-1 font-bold">Rotation centre (px)</legend>
        <TextField label="Column" {...numberField("centreX", v.centre?.x, (n) => (n === null ? null : { ...v, centre: { x: n, y: v.centre?.y ?? 0 } }))} />
        <TextField label="Row" {...numberField("centreY", v.centre?.y, (n) => (n === null ? null : { ...v, centre: { x: v.centre?.x ?? 0, y: n } }))} />
      </fieldset>
      <fieldset className="grid grid-cols-3 gap-3">
        <legend className="mb-1 font-bold">Tank edge (px)</legend>
        <TextField
          label="Column"
          {...numberField("edgeX", v.edge?.cx, (n) => (n === null ? null : { ...v, edge: { cx: n, cy: v.edge?.cy ?? 0, r: v.edge?.r ?? 0 } }))}
        />
        <TextField
          label="Row"
          {...numberField("edgeY", v.edge?.cy, (n) => (n === null ? null : { ...v, edge: { cx: v.edge?.cx ?? 0, cy: n, r: v.edge?.r ?? 0 } }))}
        />
        <TextField
          label="Radius"
          {...numberField(
            "edgeR",
            v.edge?.r,
            (n) => (n === null ? null : { ...v, edge: { cx: v.edge?.cx ?? 0, cy: v.edge?.cy ?? 0, r: n } }),
            positive("The tank edge's radius", "px"),
          )}
        />
      </fieldset>
      {v.edge ? (
        <Button type="button" tone="quiet" onClick={() => setV({ ...v, centre: { x: v.edge!.cx, y: v.edge!.cy } })}>
          Use the tank&apos;s centre as the rotation centre
        </Button>
      ) : null}
      <fieldset className="flex flex-col gap-3">
        <legend className="mb-1 font-bold">Scale</legend>
        <TextField
          label="Known length between the two points"
          unit="cm"
          {...numberField("scaleLengthCm", v.scaleLengthCm, (n) => ({ ...v, scaleLengthCm: n }), positive("The known length", "cm"))}
        />
        <input type="hidden" name="scaleLengthPx" value={scalePx === null ? "" : String(scalePx)} />
        <input type="hidden" name="scalePoints" value={v.scalePoints ? JSON.stringify(v.scalePoints) : ""} />
        <p className="text-muted" data-testid="scale-readout">
          {pxPerM
            ? `${formatFixed(pxPerM / 100, 2)} px per cm (${formatFixed(pxPerM, 1)} px/m)`
            : "No scale: speeds and radii stay in pixels; f does not need one."}
        </p>
      </fieldset>
      <fieldset className="grid grid-cols-2 gap-3">
        <legend className="mb-1 font-bold">Mark on the table (px, optional)</legend>
        <TextField
          label="Column"
          {...numberField("rateMarkX", v.rateMark?.x, (n) => ({ ...v, rateMark: n === null ? null : { x: n, y: v.rateMark?.y ?? 0 } }))}
        />
        <TextField label="Row" {...numberField("rateMarkY", v.rateMark?.y, (n) => ({ ...v, rateMark: n === null ? null : { x: v.rateMark?.x ?? 0, y: n } }))} />
        <p className="col-span-2 text-sm text-muted">
          With a lab-fixed camera the table&apos;s rate is read from this mark; a co-rotating camera reads it from the room beyond the tank edge instead.
        </p>
      </fieldset>
      {v.rateMark ? (
        <Button type="button" tone="quiet" onClick={() => setV({ ...v, rateMark: null })}>
          Clear the mark on the table
        </Button>
      ) : null}
    </>
  );
}

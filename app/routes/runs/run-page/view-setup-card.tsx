import { Card } from "~/components/ui/card";
import { formatNumber } from "~/lib/number-format";
import { tiltInWords } from "~/lib/projective/view-correction";
import { Fact, Facts } from "~/components/ui/facts";
import type { RunPageData } from "../run";

/** The view setup as saved: centre, tank edge, scale (or the calibration's), mirror and the camera's tilt. */
export function ViewSetupCard({ d }: { d: RunPageData }) {
  return (
    <Card title="View setup">
      {d.setup ? (
        <Facts>
          <Fact label="Rotation centre">
            {formatNumber(d.setup.centre.x, 5)}, {formatNumber(d.setup.centre.y, 5)} px
          </Fact>
          <Fact label="Tank edge">{d.setup.edge ? `circle of radius ${formatNumber(d.setup.edge.r, 4)} px` : "whole frame searched"}</Fact>
          <Fact label="Scale">
            {d.setup.pxPerM
              ? `${formatNumber(d.setup.pxPerM / 100, 4)} px per cm`
              : d.check?.input.setup?.pxPerM
                ? `none marked; the theory check used the scale calibration's ${formatNumber(d.check.input.setup.pxPerM / 100, 4)} px per cm`
                : "none (lengths in px)"}
          </Fact>
          <Fact label="Mirrored">{d.setup.mirrored ? "yes" : "no"}</Fact>
          <Fact label="Camera tilt">
            {d.setup.tilt
              ? `${tiltInWords(d.setup.tilt, (deg) => formatNumber(deg, 2))}, from ${d.setup.tilt.method}; positions are corrected for it`
              : (d.setup.tiltError ?? "not marked (positions used as the camera saw them)")}
          </Fact>
        </Facts>
      ) : (
        <p className="text-muted">{d.frames.length ? "Not set up yet." : "Set up once frames are in."}</p>
      )}
    </Card>
  );
}

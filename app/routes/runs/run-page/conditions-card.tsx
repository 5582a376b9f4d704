import { Link } from "react-router";
import { useLabTime } from "~/components/lab-time";
import { Card } from "~/components/ui/card";
import { calibrationKindLabels } from "~/lib/calibrations";
import { formatNumber } from "~/lib/number-format";
import { roleCan } from "~/lib/roles";
import { cameraModeLabels, directionLabels, tracerLabels } from "~/lib/runs";
import { Fact, Facts } from "~/components/ui/facts";
import type { RunPageData } from "../run";

/** The run's conditions as logged, with the calibrations in force when it was logged. */
export function ConditionsCard({ d }: { d: RunPageData }) {
  const time = useLabTime();
  const { run } = d;
  return (
    <Card title="Conditions">
      <Facts>
        <Fact label="Table">{d.table ? <Link to={`/equipment/${d.table.id}`}>{d.table.name}</Link> : "—"}</Fact>
        <Fact label="Tank">{d.tank ? <Link to={`/equipment/${d.tank.id}`}>{d.tank.name}</Link> : "—"}</Fact>
        <Fact label="Camera">
          {d.camera ? <Link to={`/equipment/${d.camera.id}`}>{d.camera.name}</Link> : "—"} · {cameraModeLabels[run.cameraMode]}
        </Fact>
        <Fact label="Set rate">
          {formatNumber(run.setRateRpm, 4)} rpm, {directionLabels[run.direction].toLowerCase()}
        </Fact>
        <Fact label="Water">
          {formatNumber(run.waterDepthM * 100, 4)} cm deep at {formatNumber(run.waterTemperatureC, 3)} °C
        </Fact>
        <Fact label="Rate reached at">{time.dateTime(run.rateReachedAt)}</Fact>
        <Fact label="Frames">
          {d.frames.length
            ? `${d.frames.length} at ${formatNumber(run.frameRateFps, 4)} frames/s, ${run.frameWidthPx} × ${run.frameHeightPx} px`
            : `none yet (${formatNumber(run.frameRateFps, 4)} frames/s planned)`}
        </Fact>
        <Fact label="Tracer">{tracerLabels[run.tracer]}</Fact>
        {run.notes ? (
          <Fact label="Notes">
            <span className="whitespace-pre-wrap">{run.notes}</span>
          </Fact>
        ) : null}
        <Fact label="Calibrations in force">
          {d.calibrations.inForce.length ? (
            <ul>
              {d.calibrations.inForce.map((c) => (
                <li key={c.id}>
                  {roleCan(d.user.role, "read_calibrations") ? (
                    <Link to={`/calibrations/${c.id}`}>
                      {calibrationKindLabels[c.kind]} #{c.id}
                    </Link>
                  ) : (
                    `${calibrationKindLabels[c.kind]} #${c.id}`
                  )}{" "}
                  of {[d.table, d.tank, d.camera].find((e) => e?.id === c.equipmentId)?.name ?? "?"}, due {time.dateTime(c.dueAt)}
                </li>
              ))}
            </ul>
          ) : (
            "none signed and in date when the run was logged"
          )}
        </Fact>
      </Facts>
    </Card>
  );
}

import { Link } from "react-router";
import { useLabTime } from "~/components/lab-time";
import { Notice } from "~/components/ui/notice";
import { calibrationKindLabels } from "~/lib/calibrations";
import { flaggedCalibrations } from "~/lib/calibrations-applied";
import { roleCan } from "~/lib/roles";
import type { RunPageData } from "../run";

/** What the run page says first: a check out of date, a signed-off run, calibrations that disagree or were past due. */
export function RunNotices({ d }: { d: RunPageData }) {
  const time = useLabTime();
  const { run } = d;
  return (
    <>
      {d.checkOutOfDate ? (
        <Notice kind="caution" title="The theory check is out of date">
          Changed since the last check: {d.checkOutOfDate.because.join(", ")}. Its verdict is withdrawn and the run cannot be signed off until a new check is
          made.{" "}
          {d.checkOutOfDate.recheckPending
            ? "Tankside is checking the run again now; reload to see the new verdict."
            : "Track the run again to get a check made from it as it is now."}
        </Notice>
      ) : null}
      {run.state === "signed_off" ? (
        <Notice kind="info" title="Signed off: this run is read-only">
          A correction is logged as a new run linked to this one.
        </Notice>
      ) : null}
      {flaggedCalibrations(d.check?.result.calibrationsApplied).map((c) => (
        <Notice
          key={`flag-${c.kind}-${c.calibrationId}`}
          kind="caution"
          title={`The ${calibrationKindLabels[c.kind].toLowerCase()} in force disagrees with this run's view setup`}
        >
          {c.text}
        </Notice>
      ))}
      {d.calibrations.pastDue.map((c) => {
        const item = [d.table, d.tank, d.camera].find((e) => e?.id === c.equipmentId);
        return (
          <Notice
            key={c.id}
            kind="caution"
            title={`The ${calibrationKindLabels[c.kind].toLowerCase()} of ${item?.name ?? "an item"} was past due when this run was logged`}
          >
            It fell due {time.dateTime(c.dueAt)}; the theory check used {c.kind === "rate" ? "the set rate, uncalibrated" : "no calibration of this kind"}.
            {roleCan(d.user.role, "read_calibrations") ? (
              <>
                {" "}
                <Link to={`/calibrations/${c.id}`}>See the record</Link>.
              </>
            ) : null}
          </Notice>
        );
      })}
    </>
  );
}

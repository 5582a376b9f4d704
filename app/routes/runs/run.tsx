import { tiltInWords } from "~/lib/projective/view-correction";
import { Link } from "react-router";
import type { Route } from "./+types/run";
import { requireUser } from "~/.server/auth/permissions";
import { loadRun } from "~/.server/runs/access";
import { runPageData } from "~/.server/runs/detail";
import { getLabSettings } from "~/.server/settings";
import { cameraModeLabels, directionLabels, runLabel, tracerLabels } from "~/lib/runs";
import { formatFixed, formatNumber } from "~/lib/number-format";
import { useLabTime } from "~/components/lab-time";
import { ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { RunConditionsPanel } from "~/components/run-conditions-panel";
import { FrameUploader } from "~/components/runs/frame-uploader";
import { TrackingPanel } from "~/components/runs/tracking-panel";
import { TheoryCheckPanel } from "~/components/runs/theory-check-panel";
import { TableRatePanel } from "~/components/runs/table-rate-panel";
import { tableRateSummary } from "~/.server/runs/rate-from-footage";
import { FrameViewer } from "~/components/runs/frame-viewer";
import { frameReviewData } from "~/.server/runs/frame-review";
import { carryOverOffer } from "~/.server/runs/setup-carry-over";
import { RunStateTag, VerdictTag } from "~/components/run-record/tags";
import { SupersedesLinks } from "~/components/run-record/supersedes-links";
import { SignOffPanel } from "~/components/run-record/sign-off-panel";
import { RunHistoryList } from "~/components/run-record/run-history-list";
import { RunExportLinks } from "~/components/run-record/run-export-links";
import { getRunRecordParts } from "~/.server/runs/record";
import { currentCheck } from "~/.server/runs/current-check";
import { calibrationKindLabels } from "~/lib/calibrations";
import { flaggedCalibrations } from "~/lib/calibrations-applied";
import { roleCan } from "~/lib/roles";

export const meta: Route.MetaFunction = ({ data }) => [{ title: `${data ? runLabel(data.run.id) : "Run"} · Tankside` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const run = await loadRun(request, params.id);
  const current = await currentCheck(run);
  const [page, settings, record, tableRate, review, carryOver] = await Promise.all([
    runPageData(run, user, current),
    getLabSettings(),
    getRunRecordParts(run, user, current),
    tableRateSummary(run),
    frameReviewData(run),
    carryOverOffer(run),
  ]);
  return { ...page, record, review, user, spinUpTimesToWait: settings.spinUpTimesToWait, tableRate, carryOver };
}

function Fact({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div className="contents">
      <dt className="font-bold">{label}</dt>
      <dd>{children}</dd>
    </div>
  );
}

export default function RunPage({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const d = loaderData;
  const { run } = d;
  const canChange = d.canChange;
  const readyReason = !d.frames.length ? "Bring the frames first." : !d.setup ? "Set up the view first." : null;
  const longest = d.tracks.reduce<(typeof d.tracks)[number] | null>((a, t) => (!a || t.points > a.points ? t : a), null);
  // Ro = U/(|f| L) with the tracer's mean speed and the tank's radius as the length of the motion.
  const tankRadius = d.tank?.diameterM ? d.tank.diameterM / 2 : null;
  const observed =
    d.check?.result.predictedRadiusM && d.check.result.fPredicted && tankRadius
      ? { speed: Math.abs(d.check.result.predictedRadiusM * d.check.result.fPredicted), length: tankRadius }
      : null;

  return (
    <div className="flex flex-col gap-6">
      <PageHeader
        title={
          <span className="flex flex-wrap items-center gap-3">
            {runLabel(run.id)} <RunStateTag state={run.state} /> <VerdictTag verdict={run.verdict} outOfDate={Boolean(d.checkOutOfDate)} />
          </span>
        }
        subtitle={`${run.purpose} · logged by ${d.technician?.name ?? "?"} on ${time.dateTime(run.createdAt)}`}
        actions={
          <>
            {canChange ? <ButtonLink to={`/runs/${run.id}/edit`}>Edit conditions</ButtonLink> : null}
            {canChange && d.frames.length ? (
              <ButtonLink to={`/runs/${run.id}/setup`}>{d.setup ? "Change the view setup" : "Set up the view"}</ButtonLink>
            ) : null}
          </>
        }
      />
      <SupersedesLinks supersedes={d.record.links.supersedes} supersededBy={d.record.links.supersededBy} />
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

      <div className="grid gap-6 xl:grid-cols-[1.6fr_1fr]">
        <Card title="Conditions">
          <dl className="grid grid-cols-[auto_1fr] gap-x-6 gap-y-2">
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
          </dl>
        </Card>
        <RunConditionsPanel
          rpm={run.setRateRpm}
          direction={run.direction}
          depthCm={run.waterDepthM * 100}
          temperatureC={run.waterTemperatureC}
          tankRadiusM={d.tank?.diameterM ? d.tank.diameterM / 2 : null}
          tankDepthM={d.tank?.depthM ?? null}
          tableMaxRpm={d.table?.maxRateRpm ?? null}
          rateReachedAt={run.rateReachedAt ? new Date(run.rateReachedAt) : null}
          spinUpTimesToWait={d.spinUpTimesToWait}
          observed={observed}
        />
      </div>

      <Card title={`Frame stack (${d.frames.length})`}>
        {d.frameFiles.missing ? (
          <div className="mb-4" data-testid="frames-missing">
            <Notice kind="error" title={`${d.frameFiles.missing} of ${d.frames.length} frames are missing from storage`}>
              Their files are no longer where Tankside keeps them, so they cannot be shown and tracking cannot read them.{" "}
              {canChange
                ? "Bring the same frames again (the same files or ZIP) to put them back; frames already there are not added twice."
                : "A technician can put them back by bringing the same frames again."}
            </Notice>
          </div>
        ) : null}
        {d.frameFiles.unavailable ? (
          <div className="mb-4">
            <Notice kind="caution" title="The file store cannot be reached just now">
              The frames may not show until it answers again.
            </Notice>
          </div>
        ) : null}
        {d.sharedFiles.length ? (
          <p className="mb-2 text-sm" data-testid="shared-frames">
            {d.sharedFiles.map((s) => `${s.count} of these frames are the files of ${s.label}, stored once and shared with it.`).join(" ")}
          </p>
        ) : null}
        {d.frames.length ? (
          <ol className="flex gap-2 overflow-x-auto pb-2" aria-label="Frames" data-testid="filmstrip">
            {d.frames.map((f) => (
              <li key={f.id} className="shrink-0">
                {f.missing ? (
                  <span
                    title={`${f.name}: file missing from storage`}
                    className="flex h-[68px] w-[120px] items-center justify-center rounded border border-dashed border-disagrees-ink bg-disagrees-bg px-1 text-center text-sm text-disagrees-ink"
                  >
                    {`Frame ${f.position + 1} missing`}
                  </span>
                ) : (
                  <a href={`/runs/${run.id}/frames/${f.id}/image`} title={`${f.name}${f.timeS !== null ? ` at ${formatFixed(f.timeS, 3)} s` : ""}`}>
                    <img
                      src={`/runs/${run.id}/frames/${f.id}/image?size=thumb`}
                      loading="lazy"
                      width={120}
                      height={68}
                      alt={`Frame ${f.position + 1}: ${f.name}`}
                      className="h-[68px] w-[120px] rounded border border-line object-cover"
                    />
                  </a>
                )}
              </li>
            ))}
          </ol>
        ) : (
          <p className="text-muted">No frames yet.</p>
        )}
        {canChange ? (
          <div className="mt-4">
            <FrameUploader
              runId={run.id}
              frameRate={run.frameRateFps}
              start={{ framesInRun: d.frames.length, hasSetup: Boolean(d.setup), offer: d.carryOver }}
            />
          </div>
        ) : null}
      </Card>

      {d.frames.length > 0 && run.frameWidthPx && run.frameHeightPx ? (
        <Card title="Frame review">
          <FrameViewer
            runId={run.id}
            width={run.frameWidthPx}
            height={run.frameHeightPx}
            frameRateFps={run.frameRateFps}
            frames={d.frames}
            setup={d.setup}
            tracks={d.review.tracks}
            tracksOutOfDate={d.review.tracksOutOfDate}
            canChange={canChange}
          />
        </Card>
      ) : null}

      <div id="tracking" className="grid gap-6 xl:grid-cols-2">
        <Card title="View setup">
          {d.setup ? (
            <dl className="grid grid-cols-[auto_1fr] gap-x-6 gap-y-2">
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
            </dl>
          ) : (
            <p className="text-muted">{d.frames.length ? "Not set up yet." : "Set up once frames are in."}</p>
          )}
        </Card>
        <Card title="Tracking">
          <TrackingPanel
            runId={run.id}
            initial={{ job: d.job, checkAwaited: d.checkAwaited, tracks: d.tracks }}
            canChange={canChange}
            ready={!readyReason}
            readyReason={readyReason}
          />
        </Card>
      </div>

      {d.job?.state === "done" && d.tracks.length ? (
        <Card title={`Tracks (${d.tracks.length})`}>
          <div className="grid gap-6 xl:grid-cols-[1.4fr_1fr]">
            <img
              src={`/runs/${run.id}/overlay.png?job=${d.job.id}`}
              alt="The middle frame with the tracks drawn over it"
              className="w-full rounded border border-line"
            />
            <table className="w-full self-start text-left">
              <thead>
                <tr className="border-b-2 border-line">
                  <th className="py-2">Track</th>
                  <th className="py-2">Points</th>
                  <th className="py-2">Duration</th>
                  <th className="py-2">Detected</th>
                  <th className="py-2">Jitter</th>
                </tr>
              </thead>
              <tbody>
                {d.tracks.map((t) => (
                  <tr key={t.id} className={`border-b border-line ${t.id === longest?.id ? "font-bold" : ""}`}>
                    <td className="py-2">{t.number}</td>
                    <td className="py-2">{t.points}</td>
                    <td className="py-2">{formatNumber(t.duration, 3)} s</td>
                    <td className="py-2">{t.detectedShare === null ? "—" : `${formatNumber(t.detectedShare * 100, 3)} %`}</td>
                    <td className="py-2">{t.jitterPx === null ? "—" : `${formatNumber(t.jitterPx, 2)} px`}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          </div>
        </Card>
      ) : null}

      {d.job?.state === "done" || d.check ? (
        <Card title="The table's rate">
          <TableRatePanel rate={d.tableRate} checkRate={d.check?.rate ?? null} />
        </Card>
      ) : null}

      {d.check && d.setup ? (
        <Card title="Theory check" actions={<RunExportLinks runId={run.id} hasTracks={d.tracks.length > 0} />}>
          <TheoryCheckPanel check={d.check} setup={{ ...d.setup, pxPerM: d.check.input.setup?.pxPerM ?? d.setup.pxPerM }} />
        </Card>
      ) : null}

      <div className="grid grid-cols-1 gap-6 xl:grid-cols-2">
        <Card>
          <SignOffPanel runId={run.id} signOff={d.record.signOff} />
        </Card>
        <Card title="History">
          <RunHistoryList entries={d.record.history} />
        </Card>
      </div>
    </div>
  );
}

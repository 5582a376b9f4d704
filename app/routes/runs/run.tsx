import type { Route } from "./+types/run";
import { requireUser } from "~/.server/auth/permissions";
import { loadRun } from "~/.server/runs/access";
import { runPageData } from "~/.server/runs/detail";
import { getLabSettings } from "~/.server/settings";
import { runLabel } from "~/lib/runs";
import { useLabTime } from "~/components/lab-time";
import { ButtonLink } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { RunConditionsPanel } from "~/components/run-conditions-panel";
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
import { RunNotices } from "./run-page/run-notices";
import { ConditionsCard } from "./run-page/conditions-card";
import { FrameStackCard } from "./run-page/frame-stack-card";
import { ViewSetupCard } from "./run-page/view-setup-card";
import { TracksCard } from "./run-page/tracks-card";

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

export type RunPageData = Route.ComponentProps["loaderData"];

export default function RunPage({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const d = loaderData;
  const { run } = d;
  const canChange = d.canChange;
  const readyReason = !d.frames.length ? "Bring the frames first." : !d.setup ? "Set up the view first." : null;
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
      <RunNotices d={d} />

      <div className="grid gap-6 xl:grid-cols-[1.6fr_1fr]">
        <ConditionsCard d={d} />
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

      <FrameStackCard d={d} />

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
        <ViewSetupCard d={d} />
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

      <TracksCard d={d} />

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

import type { ReactNode } from "react";
import { data } from "react-router";
import type { Route } from "./+types/report";
import { parseId } from "~/.server/http";
import { requireUser } from "~/.server/auth/permissions";
import { getRunDetailWithCheck, getSignOffView, getRunHistory } from "~/.server/runs/record";
import { storedCheckResult } from "~/.server/runs/serialize";
import { storedCheck } from "~/.server/runs/theory";
import { TrackChecksTable } from "~/components/runs/theory-check-panel";
import { Run } from "~/.server/db";
import { currentCheck } from "~/.server/runs/current-check";
import type { TheoryCheckResult } from "~/lib/analysis/check";
import { TheoryPlots } from "~/components/plots/theory-plots";
import { CalibrationsAppliedList } from "~/components/runs/calibrations-applied-list";
import { Button } from "~/components/ui/button";
import { RunExportLinks } from "~/components/run-record/run-export-links";
import { RunHistoryList } from "~/components/run-record/run-history-list";
import { SignOffPanel } from "~/components/run-record/sign-off-panel";
import { SupersedesLinks } from "~/components/run-record/supersedes-links";
import { RunStateTag, VerdictTag } from "~/components/run-record/tags";
import { formatNumber } from "~/lib/number-format";
import { useLabTime } from "~/components/lab-time";
import { cameraModeLabels, directionLabels, tracerLabels } from "~/lib/runs";

export const meta: Route.MetaFunction = ({ data: d }) => [{ title: d ? `${d.run.label} report · Tankside` : "Run report · Tankside" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const runId = parseId(request, params.id, "That run");
  const model = await Run.findByPk(runId);
  if (!model) throw data("That run does not exist.", { status: 404 });
  const current = await currentCheck(model);
  const [found, signOff, history] = await Promise.all([getRunDetailWithCheck(runId, { current }), getSignOffView(model, user, current), getRunHistory(runId)]);
  if (!found) throw data("That run does not exist.", { status: 404 });
  const run = found.detail;
  const check =
    run.latestTheoryCheck && found.check ? { ...run.latestTheoryCheck, result: storedCheckResult(found.check) as { result?: TheoryCheckResult } | null } : null;
  // The report needs the check's figures, not its plotted series: keep the page light.
  const stored = check?.result?.result;
  const result = stored ? { ...stored, series: undefined } : null;
  const setup = run.viewSetup;
  // Plots draw with the scale the check used (the scale calibration's when the view setup has none).
  const usedPxPerM = (check?.result as { input?: { setup?: { pxPerM?: number | null } } } | null)?.input?.setup?.pxPerM;
  const plots =
    stored && setup ? { result: stored, setup: { centre: setup.centrePx, pxPerM: usedPxPerM ?? setup.scalePxPerM, mirrored: setup.mirrored } } : null;
  // Every track's own check and how they were combined (a check from before this holds its one track).
  const tracks = check && found.check ? (({ checks, combination }) => ({ checks, combination }))(storedCheck(found.check)) : null;
  return {
    run: { ...run, latestTheoryCheck: check ? { ...check, result } : null },
    trackChecks: tracks,
    plots,
    usedPxPerM: usedPxPerM ?? null,
    signOff,
    history,
    printedAt: new Date().toISOString(),
  };
}

function Row({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div className="grid grid-cols-1 gap-x-3 border-b border-line py-1 sm:grid-cols-[12rem_1fr] print:grid-cols-[10rem_1fr]">
      <dt className="font-bold">{label}</dt>
      <dd>{children}</dd>
    </div>
  );
}

const pm = (v: number | null | undefined, se: number | null | undefined, unit: string) =>
  v === null || v === undefined ? "—" : `${formatNumber(v)}${se !== null && se !== undefined ? ` ± ${formatNumber(se, 2)}` : ""} ${unit}`;

export default function RunReport({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const { run, signOff, history, printedAt } = loaderData;
  const c = run.conditions;
  const check = run.latestTheoryCheck;
  const r = check?.result ?? null;
  return (
    <article className="mx-auto max-w-4xl bg-sheet p-6 print:max-w-none print:p-0">
      <div className="no-print mb-4 flex flex-wrap gap-3">
        <Button type="button" onClick={() => window.print()}>
          Print this report
        </Button>
        <RunExportLinks runId={run.id} hasTracks={run.tracks.count > 0} showReport={false} />
      </div>

      <header className="mb-4 border-b-2 border-ink pb-3">
        <p className="text-sm text-muted">Tankside run report · printed {time.dateTime(printedAt)}</p>
        <h1 className="flex flex-wrap items-center gap-3">
          <span className="font-mono">{run.label}</span> <RunStateTag state={run.state} />
        </h1>
        <p className="mt-1">{run.purpose}</p>
      </header>

      <SupersedesLinks supersedes={run.supersedes} supersededBy={run.supersededBy} />

      <section className="mt-4">
        <h2 className="text-xl">Verdict</h2>
        {run.checkOutOfDate ? (
          <p className="mt-2 font-bold">
            The theory check is out of date (changed since: {run.checkOutOfDate.because.join(", ")}); no verdict until a new check is made.
          </p>
        ) : null}
        <div className="mt-2 flex flex-wrap items-center gap-3 text-lg">
          <VerdictTag verdict={check?.verdict ?? null} />
          {r?.reason ? <span>{r.reason}</span> : null}
        </div>
      </section>

      <section className="mt-4">
        <h2 className="text-xl">Conditions</h2>
        <dl className="mt-2">
          <Row label="Set rate">
            {formatNumber(c.setRateRpm)} rpm, {directionLabels[c.direction].toLowerCase()}
          </Row>
          <Row label="Water">
            {formatNumber(c.waterDepthM * 100)} cm deep at {formatNumber(c.waterTemperatureC, 3)} °C
          </Row>
          <Row label="Rate reached at">{time.dateTime(c.rateReachedAt)}</Row>
          <Row label="Camera">
            {cameraModeLabels[c.cameraMode]}, {formatNumber(c.frameRateFps)} frames/s
          </Row>
          <Row label="Tracer">{tracerLabels[c.tracer]}</Row>
          <Row label="Logged">
            {time.dateTime(run.createdAt)} by {run.technician?.name ?? "—"}
          </Row>
          {run.notes ? <Row label="Notes">{run.notes}</Row> : null}
        </dl>
      </section>

      <section className="mt-4">
        <h2 className="text-xl">Equipment and calibrations in force</h2>
        <dl className="mt-2">
          <Row label="Table">{run.equipment.table?.name ?? "—"}</Row>
          <Row label="Tank">{run.equipment.tank?.name ?? "—"}</Row>
          <Row label="Camera">{run.equipment.camera?.name ?? "—"}</Row>
          <Row label="Calibrations">
            {run.calibrationsInForce.records.length === 0 ? (
              "None recorded when the run was logged."
            ) : (
              <ul>
                {run.calibrationsInForce.records.map((cal) => (
                  <li key={cal.id}>
                    #{cal.id} {cal.kind} calibration, performed {time.date(cal.performedAt)}, due {time.date(cal.dueAt)}
                    {cal.expired ? <strong> — expired</strong> : null}
                  </li>
                ))}
              </ul>
            )}
          </Row>
          <Row label="Frames">
            {run.frames.count} {run.frames.widthPx ? `(${run.frames.widthPx} × ${run.frames.heightPx} px)` : ""}
          </Row>
          <Row label="Scale">
            {run.viewSetup?.scalePxPerM
              ? `${formatNumber(run.viewSetup.scalePxPerM)} px/m`
              : loaderData.usedPxPerM
                ? `None marked; the theory check used the scale calibration's ${formatNumber(loaderData.usedPxPerM)} px/m`
                : "No scale set"}
          </Row>
          <Row label="Tracks">{run.tracks.count}</Row>
        </dl>
      </section>

      <section className="mt-4 print-break">
        <h2 className="text-xl">Theory check</h2>
        {r ? (
          <dl className="mt-2">
            <Row label="f measured">{pm(r.fMeasured, r.fStdError, "s⁻¹")}</Row>
            <Row label="f = 2Ω predicted">
              {pm(r.fPredicted, r.fPredictedStdError, "s⁻¹")} ({r.omegaSource})
            </Row>
            <Row label="Ratio measured / predicted">{formatNumber(r.ratio)}</Row>
            <Row label="Deflection">{r.deflection ? `to the ${r.deflection}` : "—"}</Row>
            <Row label="Linear drag">{pm(r.drag, r.dragStdError, "s⁻¹")}</Row>
            <Row label="Inertial circle">
              {r.circle
                ? `${r.circle.radiusM !== null ? `${formatNumber(r.circle.radiusM * 100)} cm` : `${formatNumber(r.circle.radiusPx)} px`} radius, period ${formatNumber(r.circle.period)} s`
                : "—"}
            </Row>
            <Row label="Calibrations in this check">
              <CalibrationsAppliedList entries={r.calibrationsApplied} />
            </Row>
            <Row label="Points used">
              {r.nPoints} ({r.nLeftOut} left out)
            </Row>
            {r.settings ? (
              <Row label="Settings">
                tolerance {formatNumber(r.settings.tolerance * 100)} %, window {r.settings.window ?? "—"} frames, order {r.settings.polyOrder}
              </Row>
            ) : null}
            <Row label="Checked">
              {time.dateTime(check?.createdAt)} · code {check?.codeVersion}
            </Row>
          </dl>
        ) : (
          <p className="mt-2 text-muted">No theory check yet.</p>
        )}
        {loaderData.trackChecks ? (
          <div className="mt-4">
            <TrackChecksTable check={loaderData.trackChecks} />
          </div>
        ) : null}
        {loaderData.plots ? (
          <div className="mt-4 print-break">
            <TheoryPlots result={loaderData.plots.result} setup={loaderData.plots.setup} />
          </div>
        ) : null}
      </section>

      <section className="mt-4">
        {/* On screen the sign-off panel (a lab manager can sign from the report); on paper, the plain record. */}
        <div className="no-print">
          <SignOffPanel runId={run.id} signOff={signOff} redirectTo={`/runs/${run.id}/report`} />
        </div>
        <div className="hidden print:block">
          <h2 className="text-xl">Sign-off</h2>
          {signOff.state === "signed_off" ? (
            <p className="mt-2">
              Signed off by <strong>{signOff.signedOffBy?.name}</strong> on {time.dateTime(signOff.signedOffAt)}.
            </p>
          ) : (
            <>
              <p className="mt-2">Not signed off.</p>
              <p className="mt-8 border-t border-ink pt-1 text-sm">Lab manager's signature and date</p>
            </>
          )}
        </div>
      </section>

      <section className="mt-4">
        <h2 className="text-xl">History</h2>
        <RunHistoryList entries={history} />
      </section>
    </article>
  );
}

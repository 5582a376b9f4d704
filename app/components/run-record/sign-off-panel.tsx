import { useFetcher } from "react-router";
import type { action as signOffAction } from "~/routes/runs/sign-off";
import type { SignOffView } from "~/.server/runs/record";
import { Button, ButtonLink } from "~/components/ui/button";
import { Card } from "~/components/ui/card";
import { Notice } from "~/components/ui/notice";
import { useLabTime } from "~/components/lab-time";

/**
 * Sign-off for the run record: who signed and when, or (for a lab manager, on a checked run) the
 * form to sign; on a signed-off run, the way to log a correction.
 */
export function SignOffPanel({ runId, signOff, redirectTo = `/runs/${runId}` }: { runId: number; signOff: SignOffView; redirectTo?: string }) {
  const time = useLabTime();
  const fetcher = useFetcher<typeof signOffAction>();
  const busy = fetcher.state !== "idle";
  const failed = fetcher.data && !fetcher.data.ok ? fetcher.data.message : null;
  return (
    <Card title="Sign-off">
      {signOff.state === "signed_off" ? (
        <div className="flex flex-col gap-3">
          <p data-testid="signed-off">
            <strong>Signed off</strong> by {signOff.signedOffBy?.name ?? "a lab manager"} on {time.dateTime(signOff.signedOffAt)}. The run is read-only: its
            conditions, frames, tracks and theory check stay as they were signed.
          </p>
          {signOff.canCorrect ? (
            <div className="no-print">
              <ButtonLink to={`/runs/new?supersedes=${runId}`} tone="primary">
                Log a correction
              </ButtonLink>
              <p className="mt-1 text-sm text-muted">A correction is a new run linked to this one; both show the link.</p>
            </div>
          ) : null}
        </div>
      ) : signOff.canSignOff ? (
        <fetcher.Form method="post" action={`/runs/${runId}/sign-off`} className="no-print flex flex-col gap-3">
          <input type="hidden" name="redirectTo" value={redirectTo} />
          <label className="flex min-h-12 items-center gap-3">
            <input type="checkbox" name="confirm" value="yes" required className="size-6" />I have checked the conditions, frames, tracks and theory check of
            this run.
          </label>
          <Button type="submit" disabled={busy} className="self-start">
            {busy ? "Signing off…" : "Sign off this run"}
          </Button>
          {failed ? <Notice kind="error">{failed}</Notice> : null}
        </fetcher.Form>
      ) : (
        <p className="text-muted">{signOff.blockedReason ?? "Not signed off yet. A lab manager signs a run off once its theory check is done."}</p>
      )}
    </Card>
  );
}

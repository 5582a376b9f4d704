import { Tag } from "~/components/ui/card";
import { runStateLabels, type RunState, type Verdict } from "~/lib/runs";

const verdictWords: Record<Verdict, string> = { agrees: "Agrees", disagrees: "Disagrees", inconclusive: "Inconclusive" };

/**
 * The verdict as a word in its tone: the colour is never the only signal. A checked run without a
 * verdict has a check that is out of date (its inputs changed): say so rather than "not checked".
 */
export function VerdictTag({ verdict, outOfDate = false }: { verdict: Verdict | null; outOfDate?: boolean }) {
  if (!verdict && outOfDate) return <span className="font-bold text-muted">Check out of date</span>;
  if (!verdict) return <span className="text-muted">Not checked</span>;
  return <Tag tone={verdict}>{verdictWords[verdict]}</Tag>;
}

export function RunStateTag({ state }: { state: RunState }) {
  return <Tag tone={state === "signed_off" ? "tank" : "neutral"}>{runStateLabels[state]}</Tag>;
}

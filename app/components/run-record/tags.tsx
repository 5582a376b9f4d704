import { Tag } from "~/components/ui/card";
import { runStateLabels, type RunState, type Verdict } from "~/lib/runs";

const verdictWords: Record<Verdict, string> = { agrees: "Agrees", disagrees: "Disagrees", inconclusive: "Inconclusive" };

/** The verdict as a word in its tone: the colour is never the only signal. */
export function VerdictTag({ verdict }: { verdict: Verdict | null }) {
  if (!verdict) return <span className="text-muted">Not checked</span>;
  return <Tag tone={verdict}>{verdictWords[verdict]}</Tag>;
}

export function RunStateTag({ state }: { state: RunState }) {
  return <Tag tone={state === "signed_off" ? "tank" : "neutral"}>{runStateLabels[state]}</Tag>;
}

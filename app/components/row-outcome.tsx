/** What a page's action answers to something done on one row of a list (a booking, a person). */
export type RowOutcomeData = { notice?: string; problem?: string };

/**
 * The result of a row's action, said in that row: an announced region (role=status, polite) that
 * is always in the row, empty until there is something to say, so screen readers read what comes
 * into it. Pass nothing while the row's request is on its way, and the last message goes away
 * before the next one comes.
 */
export function RowOutcome({ outcome, testId }: { outcome: RowOutcomeData | undefined; testId: string }) {
  return (
    <div role="status" aria-live="polite" data-testid={testId}>
      {outcome?.notice ? <p className="rounded-lg border-l-4 border-agrees-ink bg-agrees-bg px-3 py-2 font-bold text-agrees-ink">{outcome.notice}</p> : null}
      {outcome?.problem ? (
        <p className="rounded-lg border-l-4 border-disagrees-ink bg-disagrees-bg px-3 py-2 font-bold text-disagrees-ink">{outcome.problem}</p>
      ) : null}
    </div>
  );
}

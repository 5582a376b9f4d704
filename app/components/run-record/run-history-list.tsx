import type { RunHistoryEntry } from "~/.server/runs/record";
import { ScrollRegion } from "~/components/ui/scroll-region";
import { useLabTime } from "~/components/lab-time";
import { historyEntryText } from "~/lib/history-text";

function value(v: string | null) {
  return v === null || v === "" ? <span className="text-muted">(none)</span> : <span className="font-mono">{v}</span>;
}

/**
 * Every change to a record (a run, or a calibration record), oldest first: who, when, which field,
 * old → new in words (lib/history-text.ts). Fields named in `events` are single happenings (logged, signed off), said once.
 */
export function RunHistoryList({ entries, events = ["created"], testId = "run-history" }: { entries: RunHistoryEntry[]; events?: string[]; testId?: string }) {
  const time = useLabTime();
  if (!entries.length) return <p className="text-muted">No changes recorded.</p>;
  return (
    // A long change scrolls inside its card on a phone instead of widening the page.
    <ScrollRegion label="History">
      <table className="w-full text-left" data-testid={testId}>
        <thead className="border-b-2 border-line-strong">
          <tr>
            <th scope="col" className="py-2 pr-3">
              When
            </th>
            <th scope="col" className="py-2 pr-3">
              Who
            </th>
            <th scope="col" className="py-2 pr-3">
              What
            </th>
            <th scope="col" className="py-2">
              Change
            </th>
          </tr>
        </thead>
        <tbody className="divide-y divide-line">
          {entries.map((e) => {
            const text = historyEntryText(e, events, (iso) => time.dateTime(iso));
            return (
              <tr key={e.id}>
                <td className="py-2 pr-3 whitespace-nowrap">{time.dateTime(e.at)}</td>
                <td className="py-2 pr-3">{e.who?.name ?? "Tankside"}</td>
                <td className="py-2 pr-3">{text.what}</td>
                <td className="py-2">
                  {text.change.event ? (
                    text.change.detail === null ? null : (
                      value(text.change.detail)
                    )
                  ) : (
                    <>
                      {value(text.change.from)} <span aria-label="changed to">→</span> {value(text.change.to)}
                    </>
                  )}
                </td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </ScrollRegion>
  );
}

import { Card } from "~/components/ui/card";
import { formatNumber } from "~/lib/number-format";
import type { RunPageData } from "../run";
import { TableHead } from "~/components/ui/table-head";

/** The finished job's tracks over the middle frame and as a table, the longest in bold. */
export function TracksCard({ d }: { d: RunPageData }) {
  const { run } = d;
  const longest = d.tracks.reduce<(typeof d.tracks)[number] | null>((a, t) => (!a || t.points > a.points ? t : a), null);
  if (d.job?.state !== "done" || !d.tracks.length) return null;
  return (
    <Card title={`Tracks (${d.tracks.length})`}>
      <div className="grid gap-6 xl:grid-cols-[1.4fr_1fr]">
        <img
          src={`/runs/${run.id}/overlay.png?job=${d.job.id}`}
          alt="The middle frame with the tracks drawn over it"
          className="w-full rounded border border-line"
        />
        <table className="w-full self-start text-left">
          <TableHead columns={["Track", "Points", "Duration", "Detected", "Jitter"]} spaced={false} />
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
  );
}

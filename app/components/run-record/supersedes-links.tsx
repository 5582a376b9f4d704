import { Link } from "react-router";
import type { RunLink } from "~/.server/runs/record";
import { Notice } from "~/components/ui/notice";
import { useLabTime } from "~/components/lab-time";
import { runStateLabels } from "~/lib/runs";

/** Both ends of a correction show the link: "corrects R-0012" and "corrected by R-0040". */
export function SupersedesLinks({ supersedes, supersededBy }: { supersedes: RunLink | null; supersededBy: RunLink[] }) {
  const time = useLabTime();
  if (!supersedes && supersededBy.length === 0) return null;
  return (
    <div className="flex flex-col gap-3" data-testid="supersedes-links">
      {supersededBy.length ? (
        <Notice kind="caution" title="Corrected by a later run">
          <ul>
            {supersededBy.map((r) => (
              <li key={r.id}>
                <Link to={`/runs/${r.id}`} className="font-bold">
                  {r.label}
                </Link>{" "}
                ({runStateLabels[r.state].toLowerCase()}, logged {time.date(r.createdAt)}) corrects this run.
              </li>
            ))}
          </ul>
        </Notice>
      ) : null}
      {supersedes ? (
        <Notice kind="info" title="A correction">
          This run corrects{" "}
          <Link to={`/runs/${supersedes.id}`} className="font-bold">
            {supersedes.label}
          </Link>{" "}
          (logged {time.date(supersedes.createdAt)}).
        </Notice>
      ) : null}
    </div>
  );
}

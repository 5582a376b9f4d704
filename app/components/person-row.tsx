import { useFetcher } from "react-router";
import { roleLabels, roles, type Role } from "~/lib/roles";
import { Button } from "~/components/ui/button";
import { Tag } from "~/components/ui/card";
import { RowOutcome, type RowOutcomeData } from "~/components/row-outcome";

export type Person = { id: number; name: string; email: string; role: Role; active: boolean; invited: boolean };

/**
 * One person on /people with what a lab manager can do to them: change the role, deactivate or
 * reactivate, send the invitation again. Each is sent by the row's own fetcher, so the page stays
 * where it is and the answer is said in this row (RowOutcome), however far down the list it is.
 */
export function PersonRow({ person: p, isMe }: { person: Person; isMe: boolean }) {
  const fetcher = useFetcher<RowOutcomeData>({ key: `person-row-${p.id}` });
  const busy = fetcher.state !== "idle";
  const outcome = busy ? undefined : fetcher.data;
  return (
    <tr className="border-b border-line align-top" data-testid={`person-${p.email}`}>
      <td className="py-3 pr-3">
        <p className="font-bold">{p.name}</p>
        <p className="text-sm text-muted">{p.email}</p>
      </td>
      <td className="py-3 pr-3">
        <fetcher.Form method="post" action="/people" className="flex items-center gap-2">
          <input type="hidden" name="intent" value="role" />
          <input type="hidden" name="userId" value={p.id} />
          <label className="sr-only" htmlFor={`role-${p.id}`}>
            Role of {p.name}
          </label>
          <select
            id={`role-${p.id}`}
            // A refused change puts the select back to the role the person still has.
            key={`${p.role}-${outcome?.problem ?? ""}`}
            name="role"
            defaultValue={p.role}
            className="min-h-12 rounded-lg border-2 border-line-strong bg-sheet px-2"
          >
            {roles.map((r) => (
              <option key={r} value={r}>
                {roleLabels[r]}
              </option>
            ))}
          </select>
          <Button tone="plain" type="submit" disabled={busy}>
            Set
          </Button>
        </fetcher.Form>
      </td>
      <td className="py-3 pr-3">
        {!p.active ? <Tag tone="disagrees">deactivated</Tag> : p.invited ? <Tag tone="caution">invited</Tag> : <Tag tone="agrees">active</Tag>}
      </td>
      <td className="py-3">
        <div className="flex flex-col gap-2">
          <div className="flex flex-wrap gap-2">
            {!isMe ? (
              <fetcher.Form method="post" action="/people">
                <input type="hidden" name="userId" value={p.id} />
                <Button tone={p.active ? "danger" : "plain"} type="submit" name="intent" value={p.active ? "deactivate" : "reactivate"} disabled={busy}>
                  {p.active ? "Deactivate" : "Reactivate"}
                </Button>
              </fetcher.Form>
            ) : null}
            {p.invited && p.active ? (
              <fetcher.Form method="post" action="/people">
                <input type="hidden" name="userId" value={p.id} />
                <Button tone="quiet" type="submit" name="intent" value="resend" disabled={busy}>
                  Send invitation again
                </Button>
              </fetcher.Form>
            ) : null}
          </div>
          <RowOutcome outcome={outcome} testId={`person-${p.id}-outcome`} />
        </div>
      </td>
    </tr>
  );
}

import { Form, data } from "react-router";
import { getFormProps, useForm, type SubmissionResult } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import type { Route } from "./+types/people";
import { readForm } from "~/.server/http";
import { requireRole } from "~/.server/auth/permissions";
import { invitePerson, listPeople, PeopleError, changeRole, resendInvitation, setActive } from "~/.server/people";
import { inviteSchema, roleChangeSchema } from "~/lib/validation/people";
import { roleLabels, roles } from "~/lib/roles";
import { Button } from "~/components/ui/button";
import { Card, PageHeader } from "~/components/ui/card";
import { PersonRow } from "~/components/person-row";
import { choicesOf, SelectField, TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";
import { ScrollRegion } from "~/components/ui/scroll-region";
import { formText } from "~/lib/form-text";
import { TableHead } from "~/components/ui/table-head";

export const meta: Route.MetaFunction = () => [{ title: "People · Tankside" }];

export async function loader({ request }: Route.LoaderArgs) {
  const me = await requireRole(request, "lab_manager");
  const people = await listPeople();
  return {
    me,
    people: people.map((p) => ({ id: p.id, name: p.name, email: p.email, role: p.role, active: p.active, invited: !p.passwordHash })),
  };
}

type Outcome = { notice?: string; problem?: string };

export async function action({ request }: Route.ActionArgs) {
  const me = await requireRole(request, "lab_manager");
  const form = await readForm(request);
  const intent = formText(form, "intent");
  try {
    if (intent === "invite") {
      const submission = parseWithZod(form, { schema: inviteSchema });
      if (submission.status !== "success") return data({ invite: submission.reply() }, { status: 400 });
      const { user, mail } = await invitePerson(submission.value, me);
      return {
        invite: submission.reply({ resetForm: true }),
        ...(mail.queued
          ? { notice: `Invitation sent to ${user.email}.` }
          : { problem: `${user.name} was added, but no invitation e-mail could be queued. Use "Send invitation again".` }),
      };
    }
    const userId = Number(form.get("userId"));
    if (intent === "role") {
      const parsed = roleChangeSchema.safeParse({ userId, role: form.get("role") });
      if (!parsed.success) return data({ problem: parsed.error.issues[0]!.message }, { status: 400 });
      await changeRole(parsed.data.userId, parsed.data.role);
      return { userId, notice: `Role changed to ${roleLabels[parsed.data.role].toLowerCase()}.` };
    }
    if (intent === "deactivate" || intent === "reactivate") {
      if (!Number.isInteger(userId) || userId <= 0) return data({ problem: "No such person." }, { status: 400 });
      await setActive(userId, intent === "reactivate");
      return { userId, notice: intent === "deactivate" ? "Deactivated and signed out everywhere." : "Reactivated." };
    }
    if (intent === "resend") {
      const mail = await resendInvitation(userId, me);
      return mail.queued ? { userId, notice: "Invitation sent again." } : data({ userId, problem: "No invitation e-mail could be queued." }, { status: 500 });
    }
    return data({ problem: "Unknown action." }, { status: 400 });
  } catch (err) {
    if (err instanceof PeopleError) return data({ problem: err.message }, { status: err.status });
    throw err;
  }
}

export default function People({ loaderData, actionData }: Route.ComponentProps) {
  const outcome = (actionData ?? {}) as Outcome & { invite?: SubmissionResult<string[]> };
  const [form, fields] = useForm({
    lastResult: outcome.invite,
    ...formCheck(inviteSchema),
    // After an invitation the form starts again from these, so the next one needs only a name and an address.
    defaultValue: { role: "technician" },
  });
  const formHasErrors = Object.keys(form.allErrors).length > 0;
  return (
    <div>
      <PageHeader title="People" subtitle="Who may use Tankside, and in what role." />
      <div className="grid grid-cols-1 gap-6 lg:grid-cols-[2fr_1fr]">
        <Card title={`${loaderData.people.length} people`}>
          <ScrollRegion label="People">
            <table className="w-full text-left">
              <TableHead columns={["Name", "Role", "State", "Actions"]} />
              <tbody>
                {loaderData.people.map((p) => (
                  <PersonRow key={p.id} person={p} isMe={p.id === loaderData.me.id} />
                ))}
              </tbody>
            </table>
          </ScrollRegion>
        </Card>
        <Card title="Invite someone">
          <Form method="post" className="flex flex-col gap-4" {...getFormProps(form)}>
            {outcome.notice && !formHasErrors ? <Notice kind="success">{outcome.notice}</Notice> : null}
            {outcome.problem && !formHasErrors ? <Notice kind="error">{outcome.problem}</Notice> : null}
            <input type="hidden" name="intent" value="invite" />
            <TextField
              label="Name"
              name={fields.name.name}
              key={fields.name.key}
              defaultValue={fields.name.initialValue}
              error={fields.name.errors}
              maxLength={120}
            />
            <TextField
              label="E-mail"
              type="email"
              name={fields.email.name}
              key={fields.email.key}
              defaultValue={fields.email.initialValue}
              error={fields.email.errors}
            />
            <SelectField
              label="Role"
              name={fields.role.name}
              key={fields.role.key}
              defaultValue={fields.role.initialValue ?? "technician"}
              error={fields.role.errors}
              choices={choicesOf(roles, roleLabels)}
            />
            <Button type="submit">Send invitation</Button>
            <p className="text-sm text-muted">The invitation link lets them choose a password; it works once, for three days.</p>
          </Form>
        </Card>
      </div>
    </div>
  );
}

import { Form, data } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import type { Route } from "./+types/forgot-password";
import { readForm } from "~/.server/http";
import { requestPasswordReset } from "~/.server/people";
import { forgotSchema, RESET_MINUTES } from "~/lib/validation/people";
import { formatDuration } from "~/lib/time-format";
import { Button } from "~/components/ui/button";
import { TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";

export const meta: Route.MetaFunction = () => [{ title: "Forgot password · Tankside" }];

export async function action({ request }: Route.ActionArgs) {
  const submission = parseWithZod(await readForm(request), { schema: forgotSchema });
  if (submission.status !== "success") return data({ result: submission.reply(), sent: false }, { status: 400 });
  // One answer for every address, known or not; delivery problems reach the lab manager's outbox, never this page.
  await requestPasswordReset(submission.value.email);
  return { result: submission.reply({ resetForm: true }), sent: true };
}

export default function ForgotPassword({ actionData }: Route.ComponentProps) {
  const [form, fields] = useForm({
    lastResult: actionData?.result,
    ...formCheck(forgotSchema),
  });
  return (
    <div className="mx-auto max-w-xl rounded-card border border-line bg-sheet p-8">
      <h1>Forgot your password?</h1>
      <p className="mt-2 text-muted">
        Give the e-mail address of your Tankside account. If it has one, a link to choose a new password goes there; it works once and for{" "}
        {formatDuration(RESET_MINUTES * 60)}.
      </p>
      {actionData?.sent ? (
        <div className="mt-4">
          <Notice kind="success" title="Check your mail">
            If that address belongs to an active account, a reset link is on its way.
          </Notice>
        </div>
      ) : null}
      <Form method="post" className="mt-4 flex flex-col gap-4" {...getFormProps(form)}>
        <TextField
          label="E-mail"
          type="email"
          name={fields.email.name}
          key={fields.email.key}
          defaultValue={fields.email.initialValue}
          error={fields.email.errors}
          autoComplete="username"
        />
        <Button type="submit">Send the reset link</Button>
        <a href="/sign-in">Back to sign-in</a>
      </Form>
    </div>
  );
}

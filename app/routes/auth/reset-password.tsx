import { Form, data } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import type { Route } from "./+types/reset-password";
import { readForm } from "~/.server/http";
import { findUsableToken, PeopleError, setPasswordWithToken } from "~/.server/people";
import { startSession } from "~/.server/auth/session";
import { passwordProblem } from "~/.server/auth/password-strength";
import { setPasswordSchema } from "~/lib/validation/people";
import { Button } from "~/components/ui/button";
import { TextField } from "~/components/ui/field";
import { FormProblem } from "~/components/ui/notice";

/** One page for both single-use links: an invitation (/welcome/…) and a password reset (/reset-password/…). */
function purposeOf(request: Request) {
  return new URL(request.url).pathname.startsWith("/welcome/") ? ("invitation" as const) : ("password_reset" as const);
}

export const meta: Route.MetaFunction = () => [{ title: "Choose a password · Tankside" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const purpose = purposeOf(request);
  const found = await findUsableToken(params.token, purpose);
  if (!found) {
    return data({ purpose, valid: false as const, name: null, email: null }, { status: 410 });
  }
  return { purpose, valid: true as const, name: found.user.name, email: found.user.email };
}

export async function action({ request, params }: Route.ActionArgs) {
  const purpose = purposeOf(request);
  const submission = parseWithZod(await readForm(request), { schema: setPasswordSchema });
  if (submission.status !== "success") return data(submission.reply({ hideFields: ["password", "confirm"] }), { status: 400 });
  // Judged before the link is spent, against the person the link belongs to.
  const found = await findUsableToken(params.token, purpose);
  const weak = found ? passwordProblem(submission.value.password, found.user) : null;
  if (weak) return data(submission.reply({ fieldErrors: { password: [weak] }, hideFields: ["password", "confirm"] }), { status: 400 });
  try {
    const user = await setPasswordWithToken(params.token, purpose, submission.value.password);
    return startSession(request, user.id, "/");
  } catch (err) {
    if (err instanceof PeopleError) return data(submission.reply({ formErrors: [err.message] }), { status: err.status });
    throw err;
  }
}

export default function ChoosePassword({ loaderData, actionData }: Route.ComponentProps) {
  const [form, fields] = useForm({
    lastResult: actionData,
    ...formCheck(setPasswordSchema),
  });
  const welcome = loaderData.purpose === "invitation";
  if (!loaderData.valid) {
    return (
      <div className="mx-auto max-w-xl rounded-card border border-line bg-sheet p-8">
        <h1>This link no longer works</h1>
        <p className="mt-3">It has expired or has already been used. {welcome ? "Ask the lab manager to send the invitation again." : ""}</p>
        {!welcome ? (
          <p className="mt-3">
            <a href="/forgot-password">Ask for a new reset link</a>
          </p>
        ) : null}
      </div>
    );
  }
  return (
    <div className="mx-auto max-w-xl rounded-card border border-line bg-sheet p-8">
      <h1>{welcome ? `Welcome, ${loaderData.name}` : "Choose a new password"}</h1>
      <p className="mt-2 text-muted">
        For the account {loaderData.email}. At least 12 characters, not a common password and not built on your name or e-mail; a short sentence works well.
      </p>
      <Form method="post" className="mt-4 flex flex-col gap-4" {...getFormProps(form)}>
        <FormProblem errors={form.errors} />
        <TextField label="New password" type="password" name={fields.password.name} error={fields.password.errors} autoComplete="new-password" />
        <TextField label="The same again" type="password" name={fields.confirm.name} error={fields.confirm.errors} autoComplete="new-password" />
        <Button type="submit">{welcome ? "Set my password and sign in" : "Save the new password"}</Button>
      </Form>
    </div>
  );
}

export function shouldRevalidate() {
  return false;
}

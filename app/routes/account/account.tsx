import { Form, data, useActionData } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import type { Route } from "./+types/account";
import { readForm } from "~/.server/http";
import { requireUser } from "~/.server/auth/permissions";
import { getSession } from "~/.server/auth/session";
import { changeOwnPassword, PeopleError } from "~/.server/people";
import { issueApiToken, listApiTokens, revokeApiToken } from "~/.server/auth/api-tokens";
import { passwordProblem } from "~/.server/auth/password-strength";
import { currentPasswordThrottle, keepRetryAfter, throttleMessage } from "~/.server/auth/rate-limit";
import { changePasswordSchema } from "~/lib/validation/people";
import { API_TOKEN_DEFAULT_DAYS, API_TOKEN_MAX_DAYS, apiTokenSchema } from "~/lib/validation/api-tokens";
import { roleLabels } from "~/lib/roles";
import { Button } from "~/components/ui/button";
import { Card, PageHeader, Tag } from "~/components/ui/card";
import { TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";
import { useLabTime } from "~/components/lab-time";

export const meta: Route.MetaFunction = () => [{ title: "Your account · Tankside" }];

/** The throttled answer's Retry-After must reach the client (see keepRetryAfter). */
export function headers(args: Route.HeadersArgs) {
  return keepRetryAfter(args);
}

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const tokens = await listApiTokens(user.id);
  return {
    user,
    tokens: tokens.map((t) => ({
      id: t.id,
      label: t.label,
      prefix: t.tokenPrefix,
      createdAt: t.createdAt.toISOString(),
      lastUsedAt: t.lastUsedAt?.toISOString() ?? null,
      revokedAt: t.revokedAt?.toISOString() ?? null,
      revokedReason: t.revokedReason ?? null,
      expiresAt: t.expiresAt.toISOString(),
      expired: t.expiresAt.getTime() <= Date.now(),
    })),
  };
}

const hidden = ["current", "password", "confirm"];

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await readForm(request);
  const intent = form.get("intent");
  if (intent === "password") {
    const submission = parseWithZod(form, { schema: changePasswordSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply({ hideFields: hidden }) }, { status: 400 });
    // Guessing the current password here is throttled like sign-in (OWASP ASVS 4.0.3 V2.2.1).
    const throttleKey = String(user.id);
    const throttle = await currentPasswordThrottle.check(throttleKey);
    if (throttle.blocked) {
      return data(
        { intent, result: submission.reply({ fieldErrors: { current: [throttleMessage(throttle)] }, hideFields: hidden }) },
        { status: 429, headers: { "Retry-After": String(throttle.retryAfterSeconds) } },
      );
    }
    const weak = passwordProblem(submission.value.password, user);
    if (weak) return data({ intent, result: submission.reply({ fieldErrors: { password: [weak] }, hideFields: hidden }) }, { status: 400 });
    try {
      const session = await getSession(request);
      await changeOwnPassword(user.id, submission.value.current, submission.value.password, session.id);
      await currentPasswordThrottle.clear(throttleKey);
      return {
        intent,
        result: submission.reply({ resetForm: true }),
        done: "Your password is changed. Other devices signed in as you have been signed out, your API tokens have stopped working, and an e-mail confirms the change.",
      };
    } catch (err) {
      if (err instanceof PeopleError && err.field) {
        if (err.field === "current") await currentPasswordThrottle.record(throttleKey);
        return data({ intent, result: submission.reply({ fieldErrors: { [err.field]: [err.message] }, hideFields: hidden }) }, { status: 400 });
      }
      throw err;
    }
  }
  if (intent === "create-token") {
    const parsed = apiTokenSchema.safeParse({ label: form.get("label"), expiresInDays: form.get("expiresInDays") });
    if (!parsed.success) return data({ intent, tokenError: parsed.error.issues[0]?.message ?? "Check the token's name and days." }, { status: 400 });
    const { token } = await issueApiToken(user, parsed.data);
    return { intent, newToken: token };
  }
  if (intent === "revoke-token") {
    const id = Number(form.get("tokenId"));
    if (!Number.isInteger(id) || !(await revokeApiToken(user.id, id))) {
      return data({ intent, tokenError: "That token is not yours or is already revoked." }, { status: 404 });
    }
    return { intent, done: "Token revoked: scripts using it now get 401." };
  }
  return data({ intent, tokenError: "Unknown action." }, { status: 400 });
}

const revokedLabels: Record<string, string> = {
  revoked: "by you",
  password_changed: "when your password changed",
  deactivated: "when the account was deactivated",
};

export default function Account({ loaderData }: Route.ComponentProps) {
  const time = useLabTime();
  const actionData = useActionData<typeof action>();
  const passwordResult = actionData && "result" in actionData ? actionData.result : undefined;
  const [form, fields] = useForm({
    lastResult: passwordResult,
    ...formCheck(changePasswordSchema),
  });
  const { user, tokens } = loaderData;
  return (
    <div>
      <PageHeader title="Your account" subtitle={`${user.name} · ${user.email} · ${roleLabels[user.role]}`} />
      {actionData && "done" in actionData && actionData.done ? (
        <div className="mb-4">
          <Notice kind="success">{actionData.done}</Notice>
        </div>
      ) : null}
      <div className="grid gap-6 lg:grid-cols-2">
        <Card title="Change your password">
          <Form method="post" className="flex flex-col gap-4" {...getFormProps(form)}>
            <input type="hidden" name="intent" value="password" />
            <TextField label="Current password" type="password" name={fields.current.name} error={fields.current.errors} autoComplete="current-password" />
            <TextField
              label="New password"
              type="password"
              name={fields.password.name}
              error={fields.password.errors}
              autoComplete="new-password"
              hint="At least 12 characters, not a common password and not built on your name or e-mail; a short sentence works well."
            />
            <TextField label="New password again" type="password" name={fields.confirm.name} error={fields.confirm.errors} autoComplete="new-password" />
            <Button type="submit" className="self-start">
              Change password
            </Button>
          </Form>
        </Card>
        <Card title="API tokens">
          <p className="text-muted">
            For scripts that read runs or export tracks. A token acts with your role; send it as <code className="font-mono">Authorization: Bearer …</code>. It
            is shown once.
          </p>
          {actionData && "newToken" in actionData && actionData.newToken ? (
            <div className="mt-3">
              <Notice kind="success" title="Copy this token now; it will not be shown again">
                <code data-testid="new-token" className="block break-all font-mono">
                  {actionData.newToken}
                </code>
              </Notice>
            </div>
          ) : null}
          {actionData && "tokenError" in actionData && actionData.tokenError ? (
            <div className="mt-3">
              <Notice kind="error">{actionData.tokenError}</Notice>
            </div>
          ) : null}
          <Form method="post" className="mt-4 flex flex-wrap items-end gap-3">
            <input type="hidden" name="intent" value="create-token" />
            <div className="flex-1">
              <TextField label="Token name" name="label" placeholder="e.g. term export script" maxLength={80} />
            </div>
            <div className="w-48">
              <TextField
                label={`Works for (1–${API_TOKEN_MAX_DAYS})`}
                name="expiresInDays"
                type="number"
                min={1}
                max={API_TOKEN_MAX_DAYS}
                step={1}
                defaultValue={String(API_TOKEN_DEFAULT_DAYS)}
                unit="days"
              />
            </div>
            <Button type="submit">Create token</Button>
          </Form>
          <ul className="mt-4 divide-y divide-line">
            {tokens.map((t) => (
              <li key={t.id} className="flex flex-wrap items-center justify-between gap-2 py-3">
                <div>
                  <p className="font-bold">
                    {t.label} <span className="font-mono text-sm text-muted">{t.prefix}…</span>
                  </p>
                  <p className="text-sm text-muted">
                    made {time.dateTime(t.createdAt)} · {t.lastUsedAt ? `last used ${time.dateTime(t.lastUsedAt)}` : "never used"} ·{" "}
                    {t.revokedAt
                      ? `revoked ${time.dateTime(t.revokedAt)}${t.revokedReason ? ` (${revokedLabels[t.revokedReason]})` : ""}`
                      : `${t.expired ? "expired" : "expires"} ${time.dateTime(t.expiresAt)}`}
                  </p>
                </div>
                {t.revokedAt ? (
                  <Tag>revoked</Tag>
                ) : t.expired ? (
                  <Tag>expired</Tag>
                ) : (
                  <Form method="post">
                    <input type="hidden" name="intent" value="revoke-token" />
                    <input type="hidden" name="tokenId" value={t.id} />
                    <Button tone="danger" type="submit">
                      Revoke
                    </Button>
                  </Form>
                )}
              </li>
            ))}
          </ul>
        </Card>
      </div>
    </div>
  );
}

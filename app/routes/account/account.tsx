import { Form, data, useActionData } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { z } from "zod";
import type { Route } from "./+types/account";
import { readForm } from "~/.server/http";
import { requireUser } from "~/.server/auth/permissions";
import { getSession } from "~/.server/auth/session";
import { changeOwnPassword, PeopleError } from "~/.server/people";
import { createApiToken, listApiTokens, revokeApiToken } from "~/.server/auth/api-tokens";
import { changePasswordSchema } from "~/lib/validation/people";
import { roleLabels } from "~/lib/roles";
import { Button } from "~/components/ui/button";
import { Card, PageHeader, Tag } from "~/components/ui/card";
import { TextField } from "~/components/ui/field";
import { Notice } from "~/components/ui/notice";
import { formatDateTime } from "~/lib/format";

export const meta: Route.MetaFunction = () => [{ title: "Your account · Tankside" }];

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
    })),
  };
}

const tokenSchema = z.object({ label: z.string().trim().min(1, "Name the token (what script uses it).").max(80, "At most 80 characters.") });

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  const form = await readForm(request);
  const intent = form.get("intent");
  if (intent === "password") {
    const submission = parseWithZod(form, { schema: changePasswordSchema });
    if (submission.status !== "success") return data({ intent, result: submission.reply({ hideFields: ["current", "password", "confirm"] }) }, { status: 400 });
    try {
      const session = await getSession(request);
      await changeOwnPassword(user.id, submission.value.current, submission.value.password, session.id);
      return { intent, result: submission.reply({ resetForm: true }), done: "Your password is changed. Other devices signed in as you have been signed out." };
    } catch (err) {
      if (err instanceof PeopleError && err.field) {
        return data({ intent, result: submission.reply({ fieldErrors: { [err.field]: [err.message] }, hideFields: ["current", "password", "confirm"] }) }, { status: 400 });
      }
      throw err;
    }
  }
  if (intent === "create-token") {
    const parsed = tokenSchema.safeParse({ label: form.get("label") });
    if (!parsed.success) return data({ intent, tokenError: parsed.error.issues[0].message }, { status: 400 });
    const { token } = await createApiToken(user.id, parsed.data.label);
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

export default function Account({ loaderData }: Route.ComponentProps) {
  const actionData = useActionData<typeof action>();
  const passwordResult = actionData && "result" in actionData ? actionData.result : undefined;
  const [form, fields] = useForm({
    lastResult: passwordResult,
    shouldValidate: "onBlur",
    onValidate: ({ formData }) => parseWithZod(formData, { schema: changePasswordSchema }),
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
            <TextField label="New password" type="password" name={fields.password.name} error={fields.password.errors} autoComplete="new-password" hint="At least 12 characters." />
            <TextField label="New password again" type="password" name={fields.confirm.name} error={fields.confirm.errors} autoComplete="new-password" />
            <Button type="submit" className="self-start">Change password</Button>
          </Form>
        </Card>
        <Card title="API tokens">
          <p className="text-muted">
            For scripts that read runs or export tracks. A token acts with your role; send it as{" "}
            <code className="font-mono">Authorization: Bearer …</code>. It is shown once.
          </p>
          {actionData && "newToken" in actionData && actionData.newToken ? (
            <div className="mt-3">
              <Notice kind="success" title="Copy this token now; it will not be shown again">
                <code data-testid="new-token" className="block break-all font-mono">{actionData.newToken}</code>
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
                    made {formatDateTime(t.createdAt)} · {t.lastUsedAt ? `last used ${formatDateTime(t.lastUsedAt)}` : "never used"}
                  </p>
                </div>
                {t.revokedAt ? (
                  <Tag>revoked</Tag>
                ) : (
                  <Form method="post">
                    <input type="hidden" name="intent" value="revoke-token" />
                    <input type="hidden" name="tokenId" value={t.id} />
                    <Button tone="danger" type="submit">Revoke</Button>
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

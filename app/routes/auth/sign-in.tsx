import { Form, data, redirect, useNavigation } from "react-router";
import { getFormProps, useForm } from "@conform-to/react";
import { parseWithZod } from "@conform-to/zod/v4";
import { formCheck } from "~/lib/form-check";
import type { Route } from "./+types/sign-in";
import { readForm } from "~/.server/http";
import { authenticator, SignInError, SIGN_IN_FAILED } from "~/.server/auth/authenticator";
import { getCurrentUser, safeRedirectTo } from "~/.server/auth/permissions";
import { startSession } from "~/.server/auth/session";
import { checkSignInThrottle, clearSignInFailures, clientAddressOf, keepRetryAfter, recordSignInFailure, throttleMessage } from "~/.server/auth/rate-limit";
import { env } from "~/.server/env";
import { signInSchema } from "~/lib/validation/people";
import { Button } from "~/components/ui/button";
import { TextField } from "~/components/ui/field";
import { Notice, FormProblem } from "~/components/ui/notice";
import { TanksideMark } from "~/components/app-shell";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Tankside" }];

/** The throttled answer's Retry-After must reach the client (see keepRetryAfter). */
export function headers(args: Route.HeadersArgs) {
  return keepRetryAfter(args);
}

export async function loader({ request }: Route.LoaderArgs) {
  const url = new URL(request.url);
  const redirectTo = safeRedirectTo(url.searchParams.get("redirectTo"));
  if (await getCurrentUser(request).catch(() => null)) throw redirect(redirectTo);
  return {
    redirectTo,
    demo: env.demo ? { password: "tankside-demo", people: ["manager@tankside.example", "tech@tankside.example", "instructor@tankside.example"] } : null,
  };
}

export async function action({ request, context }: Route.ActionArgs) {
  const form = await readForm(request.clone());
  const submission = parseWithZod(form, { schema: signInSchema });
  if (submission.status !== "success") {
    return data(submission.reply({ hideFields: ["password"] }), { status: 400 });
  }
  const { email, redirectTo } = submission.value;
  const address = clientAddressOf(context);
  const throttle = await checkSignInThrottle(email.toLowerCase(), address);
  if (throttle.blocked) {
    return data(
      submission.reply({
        formErrors: [throttleMessage(throttle)],
        hideFields: ["password"],
      }),
      { status: 429, headers: { "Retry-After": String(throttle.retryAfterSeconds) } },
    );
  }
  try {
    const user = await authenticator.authenticate("form", request);
    await clearSignInFailures(email.toLowerCase());
    return startSession(request, user.id, safeRedirectTo(redirectTo));
  } catch (err) {
    if (!(err instanceof SignInError)) throw err;
    await recordSignInFailure(email.toLowerCase(), address);
    return data(submission.reply({ formErrors: [SIGN_IN_FAILED], hideFields: ["password"] }), { status: 401 });
  }
}

export default function SignIn({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const [form, fields] = useForm({
    lastResult: actionData,
    ...formCheck(signInSchema),
  });
  return (
    <div className="mx-auto grid max-w-4xl grid-cols-1 gap-8 md:grid-cols-[1fr_1.1fr]">
      <section className="rounded-card bg-tank-800 p-8 text-white">
        <TanksideMark size={56} />
        <h1 className="mt-4 text-white">Tankside</h1>
        <p className="mt-3 text-lg text-tank-100">
          The run log of the rotating-table lab: log each run, bring its frames, track the tracer and check the deflection against f&nbsp;=&nbsp;2Ω.
        </p>
      </section>
      <section className="rounded-card border border-line bg-sheet p-8">
        <h2>Sign in</h2>
        <Form method="post" className="mt-4 flex flex-col gap-4" {...getFormProps(form)}>
          <FormProblem errors={form.errors} />
          <input type="hidden" name="redirectTo" value={loaderData.redirectTo} />
          <TextField
            label="E-mail"
            error={fields.email.errors}
            autoComplete="username"
            type="email"
            name={fields.email.name}
            key={fields.email.key}
            defaultValue={fields.email.initialValue}
          />
          <TextField label="Password" error={fields.password.errors} autoComplete="current-password" type="password" name={fields.password.name} />
          <Button type="submit" disabled={navigation.state === "submitting"}>
            {navigation.state === "submitting" ? "Signing in…" : "Sign in"}
          </Button>
          <a href="/forgot-password" className="self-start">
            Forgot your password?
          </a>
        </Form>
        {loaderData.demo ? (
          <div className="mt-6">
            <Notice kind="info" title="Demo lab">
              <p>
                Every demo account uses the password <code className="font-mono font-bold">{loaderData.demo.password}</code>:
              </p>
              <ul className="mt-1 list-disc pl-6">
                {loaderData.demo.people.map((p) => (
                  <li key={p} className="font-mono">
                    {p}
                  </li>
                ))}
              </ul>
            </Notice>
          </div>
        ) : null}
      </section>
    </div>
  );
}

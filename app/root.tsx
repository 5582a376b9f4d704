import { isRouteErrorResponse, Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteLoaderData } from "react-router";
import type { Route } from "./+types/root";
import stylesheet from "../tailwind.css?url";
import { AppShell } from "./components/app-shell";
import { ButtonLink } from "./components/ui/button";
import { useNonce } from "./nonce";
import { getCurrentUser } from "./.server/auth/permissions";
import { usingFakeMail } from "./.server/mail/send";
import { getLabTimeZone } from "./.server/settings";
import { LabTimeProvider } from "./components/lab-time";
import { isErrorPageReason, type ErrorPageReason } from "~/lib/error-page";

export const links: Route.LinksFunction = () => [
  { rel: "stylesheet", href: stylesheet },
  { rel: "icon", href: "/favicon.svg", type: "image/svg+xml" },
];

export async function loader({ request }: Route.LoaderArgs) {
  const [user, timeZone] = await Promise.all([getCurrentUser(request).catch(() => null), getLabTimeZone()]);
  return { user, showMail: usingFakeMail, timeZone };
}

export function Layout({ children }: { children: React.ReactNode }) {
  const nonce = useNonce();
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <Meta />
        <Links />
      </head>
      <body>
        {children}
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export default function App({ loaderData }: Route.ComponentProps) {
  return (
    <LabTimeProvider zone={loaderData.timeZone}>
      <AppShell user={loaderData.user} showMail={loaderData.showMail}>
        <Outlet />
      </AppShell>
    </LabTimeProvider>
  );
}

const errorPages: Record<number, { title: string; text: string }> = {
  401: { title: "Sign in first", text: "This page needs you to be signed in." },
  403: { title: "Not for your role", text: "Your role does not open this page. Ask the lab manager if you need it." },
  404: { title: "Nothing here", text: "There is no page at this address. It may have moved, or the link is mistyped." },
  500: { title: "Something went wrong", text: "Tankside hit an error it did not expect. Nothing you saved is lost; try again." },
};

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const rootData = useRouteLoaderData<typeof loader>("root");
  let status = 500;
  let detail: string | undefined;
  let stack: string | undefined;
  let reason: ErrorPageReason | undefined;
  if (isRouteErrorResponse(error)) {
    status = error.status;
    detail = typeof error.data === "string" ? error.data : undefined;
    reason = isErrorPageReason(error.data) ? error.data : undefined;
  } else if (import.meta.env.DEV && error instanceof Error) {
    detail = error.message;
    stack = error.stack;
  }
  // A page that knows the real reason (a run that is someone else's) says it instead of the status's words.
  const page = reason
    ? { title: reason.title, text: reason.message }
    : (errorPages[status] ?? { title: `Error ${status}`, text: "The request could not be completed." });
  return (
    <AppShell user={rootData?.user ?? null} showMail={rootData?.showMail ?? false}>
      <title>{`${page.title} · Tankside`}</title>
      <div className="mx-auto max-w-2xl rounded-card border-2 border-line bg-sheet p-8">
        <p className="font-mono text-5xl font-bold text-tank-700" data-testid="error-status">
          {status}
        </p>
        <h1 className="mt-2">{page.title}</h1>
        <p className="mt-3">{page.text}</p>
        {detail && detail !== page.text ? <p className="mt-3 text-muted">{detail}</p> : null}
        {stack ? <pre className="mt-4 overflow-auto rounded bg-paper p-3 text-sm">{stack}</pre> : null}
        <div className="mt-6 flex flex-wrap gap-3">
          {reason?.link ? (
            <ButtonLink to={reason.link.to} tone="primary">
              {reason.link.label}
            </ButtonLink>
          ) : null}
          <ButtonLink to="/" tone={reason?.link ? undefined : "primary"}>
            Back to today
          </ButtonLink>
        </div>
      </div>
    </AppShell>
  );
}

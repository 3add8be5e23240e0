import {
  data, isRouteErrorResponse, Links, Meta, Outlet, Scripts, ScrollRestoration, useRouteLoaderData,
} from "react-router";
import type { Route } from "./+types/root";
import { AppShell, type ShellUser } from "./components/app-shell";
import { FlashMessage } from "./components/flash-message";
import { useNonce } from "./components/nonce";
import { databaseAvailable, databaseLossAs503 } from "./.server/db/health";
import { getOptionalUser } from "./.server/permissions";
import { withSecurityHeaders } from "./.server/security-headers";
import { commitSession, getSession } from "./.server/session";
import { config as zodConfig } from "zod/v4/core";
import "./app.css";

// zod probes `new Function("")` once to pick a faster parser; under our CSP (no 'unsafe-eval') that probe is a
// violation report on every page that checks a form. In the browser it uses the plain parser from the start.
if (typeof document !== "undefined") zodConfig({ jitless: true });

export const middleware: Route.MiddlewareFunction[] = [(_, next) => withSecurityHeaders(next), (_, next) => databaseLossAs503(next)];

export async function loader({ request }: Route.LoaderArgs) {
  if (!(await databaseAvailable())) {
    throw data({ code: "database_unavailable" }, { status: 503, statusText: "Database unavailable" });
  }
  const user = await getOptionalUser(request);
  const session = await getSession(request);
  const flash = session.get("flash") ?? null;
  const shellUser: ShellUser = user ? { name: user.name, email: user.email, role: user.role } : null;
  return data(
    { user: shellUser, flash },
    flash ? { headers: { "Set-Cookie": await commitSession(session) } } : undefined,
  );
}

export const meta: Route.MetaFunction = () => [{ title: "Bandledger" }];

export function Layout({ children }: { children: React.ReactNode }) {
  const nonce = useNonce();
  return (
    <html lang="en">
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <link rel="icon" href="/favicon.svg" type="image/svg+xml" />
        <Meta />
        <Links />
      </head>
      <body className="antialiased">
        {children}
        <ScrollRestoration nonce={nonce} />
        <Scripts nonce={nonce} />
      </body>
    </html>
  );
}

export default function App({ loaderData }: Route.ComponentProps) {
  return (
    <AppShell user={loaderData.user}>
      {loaderData.flash ? <FlashMessage flash={loaderData.flash} /> : null}
      <Outlet />
    </AppShell>
  );
}

function ErrorPage({ code, title, children }: { code: string; title: string; children: React.ReactNode }) {
  return (
    <section className="mx-auto max-w-2xl py-12" aria-labelledby="error-title">
      <p className="figure font-mono text-sm text-copper">{code}</p>
      <h1 id="error-title" className="mt-1 text-2xl font-semibold">{title}</h1>
      <div className="mt-3 space-y-3 text-muted">{children}</div>
      <p className="mt-6">
        <a href="/" className="btn no-underline">Back to the start page</a>
      </p>
    </section>
  );
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const root = useRouteLoaderData<typeof loader>("root");
  let page: React.ReactNode;
  if (isRouteErrorResponse(error) && error.status === 404) {
    page = (
      <ErrorPage code="404" title="Nothing is filed under this address">
        <p>The page, material or record you asked for is not in the ledger. It may have been mistyped, or the link may be older than the record.</p>
      </ErrorPage>
    );
  } else if (isRouteErrorResponse(error) && error.status === 403) {
    page = (
      <ErrorPage code="403" title="Your role does not open this page">
        <p>{(error.data as { message?: string } | undefined)?.message ?? "Ask an admin of your team if you need this access."}</p>
      </ErrorPage>
    );
  } else if (isRouteErrorResponse(error) && error.status === 503) {
    page = (
      <ErrorPage code="503" title="The database is unavailable">
        <p>Bandledger cannot reach its database right now, so no values can be shown or changed. Nothing you saved is lost.</p>
        <p>Try again in a few seconds; the page recovers by itself once the database answers.</p>
      </ErrorPage>
    );
  } else if (isRouteErrorResponse(error)) {
    page = (
      <ErrorPage code={String(error.status)} title={error.statusText || "The request could not be completed"}>
        <p>{(error.data as { message?: string } | undefined)?.message ?? "Check the address or the form and try again."}</p>
      </ErrorPage>
    );
  } else {
    page = (
      <ErrorPage code="500" title="Something went wrong on our side">
        <p>The server hit an unexpected error while preparing this page. It has been logged; your saved data is unchanged.</p>
        {import.meta.env.DEV && error instanceof Error ? (
          <pre className="overflow-auto rounded bg-sheet p-3 text-xs">{error.stack}</pre>
        ) : null}
      </ErrorPage>
    );
  }
  return <AppShell user={root?.user ?? null}>{page}</AppShell>;
}

import { useEffect } from "react";
import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/sign-in";
import { retryMinute, signInMessage, tooManyCodesMessage } from "~/.server/auth/messages";
import { safeReturnTo } from "~/.server/auth/return-to";
import { requestSignInCode } from "~/.server/auth/sign-in";
import { emailField } from "~/.server/auth/totp-strategy";
import { getOptionalUser } from "~/.server/permissions";
import { readForm } from "~/.server/storage";
import { FieldError, invalidProps } from "~/components/field-error";
import { LocalClock } from "~/components/local-clock";
import { markKeptFormForRestore } from "~/components/preserve-form-on-sign-in";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Bandledger" }];

// Open to everyone; someone already signed in goes straight on.
export async function loader({ request }: Route.LoaderArgs) {
  const url = new URL(request.url);
  const returnTo = safeReturnTo(url.searchParams.get("returnTo"));
  if (await getOptionalUser(request)) throw redirect(returnTo);
  return { email: url.searchParams.get("email") ?? "", returnTo, continuing: url.searchParams.has("returnTo") && returnTo !== "/" };
}

export async function action({ request }: Route.ActionArgs) {
  const form = await readForm(request);
  const values = { email: String(form.get("email") ?? ""), returnTo: safeReturnTo(form.get("returnTo")) };
  if (!values.email.trim()) return data({ errors: { email: signInMessage("email-required") }, values, retryAt: null }, { status: 400 });
  const email = emailField.safeParse(values.email);
  if (!email.success) return data({ errors: { email: signInMessage("email-invalid") }, values, retryAt: null }, { status: 400 });
  const result = await requestSignInCode(request, { email: email.data, returnTo: values.returnTo });
  if (!result.ok) {
    return data({ errors: { email: tooManyCodesMessage(result.retryAt) }, values, retryAt: retryMinute(result.retryAt).toISOString() }, { status: 429 });
  }
  return result.response;
}

export default function SignIn({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const values = actionData?.values ?? { email: loaderData.email, returnTo: loaderData.returnTo };
  const error = actionData?.errors.email;
  useEffect(() => {
    if (loaderData.continuing) markKeptFormForRestore(loaderData.returnTo);
  }, [loaderData.continuing, loaderData.returnTo]);
  return (
    <section className="mx-auto max-w-md py-6" aria-labelledby="sign-in-title">
      <p className="label">Sign in</p>
      <h1 id="sign-in-title" className="mt-1 text-2xl font-semibold tracking-tight">Sign in with your e-mail address</h1>
      {loaderData.continuing ? (
        <p className="mt-3 rounded-[var(--radius-card)] border border-warn px-3 py-2 text-sm text-warn">
          Sign in to continue where you were; Bandledger takes you back there.
        </p>
      ) : null}
      <p className="mt-3 text-sm text-muted">
        Bandledger is open to invited members of the team. There is no password: we mail you a six-digit code and a sign-in link, valid for 10 minutes.
      </p>
      <Form method="post" className="card mt-6 space-y-4 p-5" noValidate>
        <input type="hidden" name="returnTo" value={values.returnTo} />
        <div>
          <label htmlFor="email" className="label">E-mail address</label>
          <input
            id="email" name="email" type="email" autoComplete="email" required autoFocus
            defaultValue={values.email} className="field mt-1" placeholder="name@example.com"
            {...invalidProps("email-error", error)}
          />
          {actionData?.retryAt ? (
            <p id="email-error" className="mt-1 text-sm text-fail" role="alert">
              Too many codes requested; try again at <LocalClock iso={actionData.retryAt} />.
            </p>
          ) : (
            <FieldError id="email-error" message={error} />
          )}
        </div>
        <button type="submit" className="btn-primary" disabled={navigation.state === "submitting"}>
          {navigation.state === "submitting" ? "Sending…" : "Send me a code"}
        </button>
      </Form>
      <p className="mt-4 text-xs text-muted">No account yet? Ask an admin of your team to invite your address.</p>
    </section>
  );
}

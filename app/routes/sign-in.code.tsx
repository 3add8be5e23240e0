import { data, Form, redirect, useNavigation } from "react-router";
import type { Route } from "./+types/sign-in.code";
import { retryMinute, signInMessage, tooManyCodesMessage } from "~/.server/auth/messages";
import { cancelPendingSignIn, codeState, requestSignInCode, submitSignInCode } from "~/.server/auth/sign-in";
import { CODE_MAX_WRONG_TRIES } from "~/.server/auth/totp-strategy";
import { getOptionalUser } from "~/.server/permissions";
import { readForm } from "~/.server/storage";
import { FieldError, invalidProps } from "~/components/field-error";
import { LocalClock } from "~/components/local-clock";

export const meta: Route.MetaFunction = () => [{ title: "Enter your code · Bandledger" }];

// Open to everyone; without a code requested in this browser there is nothing to enter here.
export async function loader({ request }: Route.LoaderArgs) {
  if (await getOptionalUser(request)) throw redirect("/");
  const state = await codeState(request);
  if (state.kind === "none") throw redirect("/sign-in");
  return {
    email: state.pending.email,
    requestedAt: new Date(state.pending.requestedAt).toISOString(),
    state: state.kind,
    message: state.kind === "ready" ? null : signInMessage(`code-${state.kind}`),
    triesLeft: Math.max(0, CODE_MAX_WRONG_TRIES - state.wrongTries),
  };
}

export async function action({ request }: Route.ActionArgs) {
  const form = await readForm(request);
  const intent = String(form.get("intent") ?? "verify");
  if (intent === "restart") return cancelPendingSignIn(request);
  if (intent === "resend") {
    const state = await codeState(request);
    if (state.kind === "none") throw redirect("/sign-in");
    const result = await requestSignInCode(request, { email: state.pending.email });
    if (!result.ok) return data({ errors: { resend: tooManyCodesMessage(result.retryAt) }, retryAt: retryMinute(result.retryAt).toISOString(), triesLeft: null }, { status: 429 });
    return result.response;
  }
  const code = String(form.get("code") ?? "").replace(/\s+/g, "");
  if (!/^\d{6}$/.test(code)) return data({ errors: { code: signInMessage("code-format") }, retryAt: null, triesLeft: null }, { status: 400 });
  const result = await submitSignInCode(request, code);
  if (result.ok) return result.response;
  return data(
    { errors: { code: signInMessage(result.error) }, retryAt: null, triesLeft: Math.max(0, CODE_MAX_WRONG_TRIES - result.wrongTries) },
    { status: result.status, headers: result.headers },
  );
}

export default function SignInCode({ loaderData, actionData }: Route.ComponentProps) {
  const navigation = useNavigation();
  const codeError = actionData?.errors && "code" in actionData.errors ? actionData.errors.code : null;
  const triesLeft = actionData?.triesLeft ?? loaderData.triesLeft;
  const usable = loaderData.state === "ready" && triesLeft > 0;
  return (
    <section className="mx-auto max-w-md py-6" aria-labelledby="code-title">
      <p className="label">Sign in</p>
      <h1 id="code-title" className="mt-1 text-2xl font-semibold tracking-tight">Check your e-mail</h1>
      <p className="mt-3 text-sm text-muted" data-testid="neutral-notice">
        If <strong className="text-ink">{loaderData.email}</strong> belongs to an invited, active account, a six-digit code and a sign-in link
        are on their way (requested at <LocalClock iso={loaderData.requestedAt} />). The code works for 10 minutes, in this browser only.
      </p>
      {usable ? (
        <Form method="post" className="card mt-6 space-y-4 p-5" noValidate>
          <input type="hidden" name="intent" value="verify" />
          <div>
            <label htmlFor="code" className="label">Six-digit code</label>
            <input
              id="code" name="code" inputMode="numeric" autoComplete="one-time-code" pattern="[0-9]{6}" maxLength={7} required autoFocus
              className="field figure mt-1 max-w-40 font-mono text-lg tracking-[0.3em]" {...invalidProps("code-error", codeError)}
            />
            <FieldError id="code-error" message={codeError} />
            {codeError && triesLeft > 0 ? <p className="mt-1 text-xs text-muted">{`${triesLeft} ${triesLeft === 1 ? "try" : "tries"} left for this code.`}</p> : null}
          </div>
          <button type="submit" className="btn-primary" disabled={navigation.state === "submitting"}>Sign in</button>
        </Form>
      ) : (
        <p className="mt-6 rounded-[var(--radius-card)] border border-fail px-3 py-2 text-sm text-fail" role="alert">
          {codeError ?? loaderData.message}
        </p>
      )}
      <div className="mt-6 flex flex-wrap items-center gap-3 text-sm">
        <Form method="post">
          <input type="hidden" name="intent" value="resend" />
          <button type="submit" className={usable ? "btn" : "btn-primary"}>Send a new code</button>
        </Form>
        <Form method="post">
          <input type="hidden" name="intent" value="restart" />
          <button type="submit" className="btn">Use another address</button>
        </Form>
      </div>
      {actionData?.retryAt ? (
        <p className="mt-2 text-sm text-fail" role="alert">Too many codes requested; try again at <LocalClock iso={actionData.retryAt} />.</p>
      ) : null}
    </section>
  );
}

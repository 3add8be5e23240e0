import { redirect } from "react-router";
import { audit } from "../audit";
import { getOptionalUser } from "../permissions";
import { countHit, readCount, reserveSignInRequest } from "../rate-limit";
import { commitSession, getSession, type PendingSignIn } from "../session";
import { authenticator } from "./authenticator";
import { clientAddress } from "./client-address";
import { signInMessage, type SignInMessageKey } from "./messages";
import { pageAddress, safeReturnTo } from "./return-to";
import { codeDigest, readTotpCookie, totpCookieFromResponse } from "./totp-cookie";
import { CODE_MAX_WRONG_TRIES, CODE_PERIOD_SECONDS, redirectOf, SIGN_IN_PATHS } from "./totp-strategy";

export type CodeState =
  | { kind: "none" }
  | { kind: "ready" | "void" | "expired" | "missing"; pending: PendingSignIn; wrongTries: number };

const triesBucket = (digest: string) => `totp:${digest}`;
const TRIES_WINDOW_SECONDS = CODE_PERIOD_SECONDS + 60;

// The strategy sees exactly one field, so a request can never fall into its "resend to the cookie's address" branch.
function strategyRequest(request: Request, fields: Record<string, string>): Request {
  const headers = new Headers(request.headers);
  headers.delete("content-length");
  headers.set("content-type", "application/x-www-form-urlencoded");
  return new Request(new URL(SIGN_IN_PATHS.code, request.url), { method: "POST", headers, body: new URLSearchParams(fields) });
}

function strategyCookies(response: Response): Headers {
  const headers = new Headers();
  for (const c of response.headers.getSetCookie()) headers.append("Set-Cookie", c);
  return headers;
}

export async function codeState(request: Request): Promise<CodeState> {
  const session = await getSession(request);
  const pending = session.get("pendingSignIn");
  if (!pending) return { kind: "none" };
  const cookie = readTotpCookie(request.headers.get("cookie"));
  const expired = Date.now() - pending.requestedAt > CODE_PERIOD_SECONDS * 1000;
  const wrongTries = await readCount(triesBucket(pending.codeDigest), TRIES_WINDOW_SECONDS);
  if (!cookie?.jwe) return { kind: expired ? "expired" : "missing", pending, wrongTries };
  if (codeDigest(cookie.jwe) !== pending.codeDigest || cookie.email?.toLowerCase() !== pending.email) return { kind: "missing", pending, wrongTries };
  if (expired) return { kind: "expired", pending, wrongTries };
  if (wrongTries >= CODE_MAX_WRONG_TRIES) return { kind: "void", pending, wrongTries };
  return { kind: "ready", pending, wrongTries };
}

export type CodeRequestResult = { ok: true; response: Response } | { ok: false; retryAt: Date };

export async function requestSignInCode(request: Request, input: { email: string; returnTo?: string | null }): Promise<CodeRequestResult> {
  const reservation = await reserveSignInRequest(input.email, clientAddress(request));
  if (!reservation.ok) {
    await audit({ id: null, email: input.email }, "auth.code_refused", null, request, { reason: "too_many_requests" });
    return reservation;
  }
  const response = await redirectOf(() => authenticator().authenticate("totp", strategyRequest(request, { email: input.email })));
  const cookie = totpCookieFromResponse(response);
  const session = await getSession(request);
  if (cookie?.jwe) session.set("pendingSignIn", { email: input.email, codeDigest: codeDigest(cookie.jwe), requestedAt: Date.now() });
  session.set("returnTo", safeReturnTo(input.returnTo ?? session.get("returnTo")));
  const headers = new Headers(response.headers);
  headers.append("Set-Cookie", await commitSession(session));
  return { ok: true, response: new Response(null, { status: response.status, headers }) };
}

function stateError(state: CodeState): SignInMessageKey {
  if (state.kind === "void") return "code-void";
  if (state.kind === "expired") return "code-expired";
  return "code-missing";
}

async function recordFailure(request: Request, state: Extract<CodeState, { pending: PendingSignIn }>, error: string | undefined, via: "code" | "link") {
  let wrongTries = state.wrongTries;
  if (error === "code-wrong") wrongTries = await countHit(triesBucket(state.pending.codeDigest), TRIES_WINDOW_SECONDS);
  await audit({ id: null, email: state.pending.email }, "auth.code_failed", null, request, { reason: error ?? "unknown", via, wrongTries });
  return wrongTries;
}

export type CodeSubmitResult =
  | { ok: true; response: Response }
  | { ok: false; error: SignInMessageKey | string; wrongTries: number; headers: Headers };

export async function submitSignInCode(request: Request, code: string): Promise<CodeSubmitResult> {
  const state = await codeState(request);
  if (state.kind === "none") return { ok: false, error: "code-missing", wrongTries: 0, headers: new Headers() };
  if (state.kind !== "ready") return { ok: false, error: stateError(state), wrongTries: state.wrongTries, headers: new Headers() };
  const response = await redirectOf(() => authenticator().authenticate("totp", strategyRequest(request, { code })));
  if (response.headers.get("Location") !== SIGN_IN_PATHS.code) return { ok: true, response };
  const error = totpCookieFromResponse(response)?.error;
  const wrongTries = await recordFailure(request, state, error, "code");
  const shown = error === "code-wrong" && wrongTries >= CODE_MAX_WRONG_TRIES ? "code-void" : (error ?? "code-wrong");
  return { ok: false, error: shown, wrongTries, headers: strategyCookies(response) };
}

async function redirectWithMessage(request: Request, to: string, message: SignInMessageKey | string, extra?: Headers): Promise<Response> {
  const session = await getSession(request);
  session.flash("flash", { kind: "error", message: signInMessage(message) });
  const headers = new Headers(extra);
  headers.append("Set-Cookie", await commitSession(session));
  return redirect(to, { headers });
}

// The link carries the code; the browser must still hold the code record and our binding to it.
export async function completeMagicLink(request: Request): Promise<Response> {
  const state = await codeState(request);
  if (state.kind === "none" || state.kind === "missing") return redirectWithMessage(request, SIGN_IN_PATHS.request, "link-other-browser");
  if (state.kind !== "ready") return redirectWithMessage(request, SIGN_IN_PATHS.code, stateError(state));
  const linkRequest = new Request(new URL(pageAddress(request.url), request.url), { method: "GET", headers: request.headers });
  const response = await redirectOf(() => authenticator().authenticate("totp", linkRequest));
  if (response.headers.get("Location") !== SIGN_IN_PATHS.code) return response;
  const error = totpCookieFromResponse(response)?.error;
  const wrongTries = await recordFailure(request, state, error, "link");
  const shown = error === "code-wrong" && wrongTries >= CODE_MAX_WRONG_TRIES ? "code-void" : (error ?? "code-wrong");
  return redirectWithMessage(request, SIGN_IN_PATHS.code, shown, strategyCookies(response));
}

export async function signOut(request: Request): Promise<Response> {
  const user = await getOptionalUser(request);
  if (user) await audit({ id: user.id, email: user.email }, "auth.sign_out", { type: "user", id: user.id }, request);
  const session = await getSession(request);
  session.unset("userId");
  session.unset("signedInAt");
  session.unset("pendingSignIn");
  session.unset("returnTo");
  session.flash("flash", { kind: "ok", message: "You are signed out." });
  return redirect("/", { headers: { "Set-Cookie": await commitSession(session) } });
}

export async function cancelPendingSignIn(request: Request): Promise<Response> {
  const session = await getSession(request);
  session.unset("pendingSignIn");
  return redirect(SIGN_IN_PATHS.request, { headers: { "Set-Cookie": await commitSession(session) } });
}

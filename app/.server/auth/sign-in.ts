import { redirect } from "react-router";
import { audit } from "../audit";
import { getOptionalUser } from "../permissions";
import { countHit, reserveSignInRequest } from "../rate-limit";
import { commitSession, getSession, type PendingSignIn } from "../session";
import { authenticator } from "./authenticator";
import { clientAddress } from "./client-address";
import { signInMessage, type SignInMessageKey } from "./messages";
import { pageAddress, safeReturnTo } from "./return-to";
import { loadIssuedCode, recordIssuedCode, reserveTry } from "./codes";
import { codeDigest, readTotpCookies, totpCookieFromResponse, withOnlyTotpCookie } from "./totp-cookie";
import { CODE_MAX_WRONG_TRIES, redirectOf, SIGN_IN_PATHS } from "./totp-strategy";

export type CodeState =
  | { kind: "none" }
  | { kind: "void" | "expired" | "missing" | "used" | "duplicate"; pending: PendingSignIn; wrongTries: number }
  | { kind: "ready"; pending: PendingSignIn; wrongTries: number; totpCookie: string };

// Code submissions (by code or link) from one client address in 15 minutes: five codes with three tries each, and some slack.
export const CODE_SUBMIT_LIMIT = 20;
const SUBMIT_WINDOW_SECONDS = 15 * 60;

// The strategy sees exactly one field and exactly the _totp value we checked, so it can never read another
// cookie than ours, nor fall into its "resend to the cookie's address" branch.
function strategyRequest(request: Request, fields: Record<string, string>, totpCookie?: string): Request {
  const headers = new Headers(request.headers);
  headers.delete("content-length");
  headers.set("content-type", "application/x-www-form-urlencoded");
  if (totpCookie !== undefined) headers.set("cookie", withOnlyTotpCookie(request.headers.get("cookie"), totpCookie));
  return new Request(new URL(SIGN_IN_PATHS.code, request.url), { method: "POST", headers, body: new URLSearchParams(fields) });
}

function strategyCookies(response: Response): Headers {
  const headers = new Headers();
  for (const c of response.headers.getSetCookie()) headers.append("Set-Cookie", c);
  return headers;
}

// What this browser may do with its pending code. The server row decides address, tries and use; the
// browser must present exactly one _totp cookie, and it must be the one that row was written for.
export async function codeState(request: Request): Promise<CodeState> {
  const session = await getSession(request);
  const pending = session.get("pendingSignIn");
  if (!pending) return { kind: "none" };
  const issued = await loadIssuedCode(pending.codeDigest);
  const wrongTries = issued?.tries ?? 0;
  const cookies = readTotpCookies(request.headers.get("cookie"));
  if (cookies.length > 1) return { kind: "duplicate", pending, wrongTries };
  if (!issued || issued.email !== pending.email) return { kind: "missing", pending, wrongTries };
  if (issued.used) return { kind: "used", pending, wrongTries };
  const only = cookies[0];
  if (!only?.cookie.jwe) return { kind: issued.expired ? "expired" : "missing", pending, wrongTries };
  if (codeDigest(only.cookie.jwe) !== issued.digest || only.cookie.email?.toLowerCase() !== issued.email) return { kind: "missing", pending, wrongTries };
  if (issued.expired) return { kind: "expired", pending, wrongTries };
  if (issued.tries >= CODE_MAX_WRONG_TRIES) return { kind: "void", pending, wrongTries };
  return { kind: "ready", pending, wrongTries, totpCookie: only.raw };
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
  if (cookie?.jwe) {
    const digest = codeDigest(cookie.jwe);
    await recordIssuedCode(digest, input.email);
    session.set("pendingSignIn", { email: input.email, codeDigest: digest, requestedAt: Date.now() });
  }
  session.set("returnTo", safeReturnTo(input.returnTo ?? session.get("returnTo")));
  const headers = new Headers(response.headers);
  headers.append("Set-Cookie", await commitSession(session));
  return { ok: true, response: new Response(null, { status: response.status, headers }) };
}

function stateError(state: CodeState): SignInMessageKey {
  if (state.kind === "void") return "code-void";
  if (state.kind === "expired") return "code-expired";
  if (state.kind === "used") return "code-used";
  if (state.kind === "duplicate") return "code-duplicate";
  return "code-missing";
}

type Attempt =
  | { ok: true; state: Extract<CodeState, { kind: "ready" }> }
  | { ok: false; error: SignInMessageKey; wrongTries: number; status: 400 | 429 };

// Before the strategy checks anything: one submission counted against the client address, one try taken from the code.
async function beginAttempt(request: Request, via: "code" | "link"): Promise<Attempt> {
  const submitted = await countHit(`totp-submit:${clientAddress(request)}`, SUBMIT_WINDOW_SECONDS);
  const state = await codeState(request);
  const wrongTries = state.kind === "none" ? 0 : state.wrongTries;
  const email = state.kind === "none" ? null : state.pending.email;
  if (submitted > CODE_SUBMIT_LIMIT) {
    await audit({ id: null, email }, "auth.code_failed", null, request, { reason: "too_many_tries", via });
    return { ok: false, error: "code-too-many-tries", wrongTries, status: 429 };
  }
  if (state.kind === "none") return { ok: false, error: "code-missing", wrongTries: 0, status: 400 };
  if (state.kind !== "ready") {
    if (state.kind === "duplicate") await audit({ id: null, email }, "auth.code_failed", null, request, { reason: "code-duplicate", via });
    return { ok: false, error: stateError(state), wrongTries, status: 400 };
  }
  if (!(await reserveTry(state.pending.codeDigest))) {
    const now = await codeState(request);
    const error = now.kind === "ready" || now.kind === "none" ? "code-void" : stateError(now);
    return { ok: false, error, wrongTries: now.kind === "none" ? CODE_MAX_WRONG_TRIES : now.wrongTries, status: 400 };
  }
  return { ok: true, state: { ...state, wrongTries: state.wrongTries + 1 } };
}

async function recordFailure(request: Request, state: Extract<CodeState, { pending: PendingSignIn }>, error: string | undefined, via: "code" | "link") {
  await audit({ id: null, email: state.pending.email }, "auth.code_failed", null, request, { reason: error ?? "unknown", via, wrongTries: state.wrongTries });
  return state.wrongTries;
}

function shownError(error: string | undefined, wrongTries: number): SignInMessageKey | string {
  return error === "code-wrong" && wrongTries >= CODE_MAX_WRONG_TRIES ? "code-void" : (error ?? "code-wrong");
}

export type CodeSubmitResult =
  | { ok: true; response: Response }
  | { ok: false; error: SignInMessageKey | string; wrongTries: number; headers: Headers; status: 400 | 429 };

export async function submitSignInCode(request: Request, code: string): Promise<CodeSubmitResult> {
  const attempt = await beginAttempt(request, "code");
  if (!attempt.ok) return { ...attempt, headers: new Headers() };
  const { state } = attempt;
  const response = await redirectOf(() => authenticator().authenticate("totp", strategyRequest(request, { code }, state.totpCookie)));
  if (response.headers.get("Location") !== SIGN_IN_PATHS.code) return { ok: true, response };
  const error = totpCookieFromResponse(response)?.error;
  const wrongTries = await recordFailure(request, state, error, "code");
  return { ok: false, error: shownError(error, wrongTries), wrongTries, headers: strategyCookies(response), status: 400 };
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
  const before = await codeState(request);
  if (before.kind === "none" || before.kind === "missing") return redirectWithMessage(request, SIGN_IN_PATHS.request, "link-other-browser");
  const attempt = await beginAttempt(request, "link");
  if (!attempt.ok) return redirectWithMessage(request, SIGN_IN_PATHS.code, attempt.error);
  const { state } = attempt;
  const headers = new Headers(request.headers);
  headers.set("cookie", withOnlyTotpCookie(request.headers.get("cookie"), state.totpCookie));
  const linkRequest = new Request(new URL(pageAddress(request.url), request.url), { method: "GET", headers });
  const response = await redirectOf(() => authenticator().authenticate("totp", linkRequest));
  if (response.headers.get("Location") !== SIGN_IN_PATHS.code) return response;
  const error = totpCookieFromResponse(response)?.error;
  const wrongTries = await recordFailure(request, state, error, "link");
  return redirectWithMessage(request, SIGN_IN_PATHS.code, shownError(error, wrongTries), strategyCookies(response));
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

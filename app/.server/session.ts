import { createCookieSessionStorage, redirect } from "react-router";
import { env } from "./env";

// pendingSignIn binds the address a code was sent to and that code's digest to this browser (the _totp cookie is unsigned).
export type PendingSignIn = { email: string; codeDigest: string; requestedAt: number };
export type SessionData = { userId: number; signedInAt: number; pendingSignIn: PendingSignIn; returnTo: string };

export const SESSION_MAX_AGE_SECONDS = 60 * 60 * 12;
export type SessionFlash = { flash: { kind: "ok" | "error"; message: string } };

let storage: ReturnType<typeof createCookieSessionStorage<SessionData, SessionFlash>> | undefined;

export function sessionStorage() {
  if (!storage) {
    storage = createCookieSessionStorage<SessionData, SessionFlash>({
      cookie: {
        name: "__bandledger",
        httpOnly: true,
        sameSite: "lax",
        path: "/",
        secure: env().BANDLEDGER_PUBLIC_URL.startsWith("https://"),
        secrets: [env().sessionSecret],
        maxAge: SESSION_MAX_AGE_SECONDS,
      },
    });
  }
  return storage;
}

export async function getSession(request: Request) {
  return sessionStorage().getSession(request.headers.get("Cookie"));
}

export async function commitSession(session: Awaited<ReturnType<typeof getSession>>) {
  return sessionStorage().commitSession(session);
}

export async function destroySession(session: Awaited<ReturnType<typeof getSession>>) {
  return sessionStorage().destroySession(session);
}

// A toast after a redirect, carried by the session cookie.
export async function redirectWithFlash(request: Request, to: string, flash: SessionFlash["flash"], init?: ResponseInit) {
  const session = await getSession(request);
  session.flash("flash", flash);
  const headers = new Headers(init?.headers);
  headers.append("Set-Cookie", await commitSession(session));
  return redirect(to, { ...init, headers });
}

import { AsyncLocalStorage } from "node:async_hooks";
import { createHash, randomBytes } from "node:crypto";
import { and, eq, gt, lt, sql } from "drizzle-orm";
import { createCookie, createSession, createSessionStorage, redirect, type Session } from "react-router";
import { clientAddress } from "./auth/client-address";
import { db } from "./db/client";
import { sessions, users } from "./db/schema";
import { env } from "./env";
import { currentUserColumns, toCurrentUser, type CurrentUser } from "./permissions";

// pendingSignIn binds the address a code was sent to and that code's digest to this browser (the _totp cookie is unsigned).
export type PendingSignIn = { email: string; codeDigest: string; requestedAt: number };
export type SessionData = { userId: number; signedInAt: number; pendingSignIn: PendingSignIn; returnTo: string };

export const SESSION_MAX_AGE_SECONDS = 60 * 60 * 12;
export type SessionFlash = { flash: { kind: "ok" | "error"; message: string } };
export type AppSession = Session<SessionData, SessionFlash>;

export const SESSION_COOKIE = "__bandledger";
// Last-seen times are written at most this often per session, so a busy page does not write on every request.
const LAST_SEEN_STEP_SECONDS = 60;

/** The session id the cookie carries: 256 random bits. The table keeps its SHA-256 only. */
export function newSessionId(): string {
  return randomBytes(32).toString("base64url");
}

export function sessionDigest(id: string): string {
  return createHash("sha256").update(id).digest("hex");
}

type Client = { ip: string; userAgent: string };
// Who is committing a new session (createData has no request of its own).
const committing = new AsyncLocalStorage<Client>();
const clientOfSession = new WeakMap<object, Client>();

function clientOf(request: Request): Client {
  return { ip: clientAddress(request), userAgent: (request.headers.get("user-agent") ?? "").slice(0, 255) };
}

let cookie: ReturnType<typeof createCookie> | undefined;
export function sessionCookie() {
  cookie ??= createCookie(SESSION_COOKIE, {
    httpOnly: true,
    sameSite: "lax",
    path: "/",
    secure: env().BANDLEDGER_PUBLIC_URL.startsWith("https://"),
    secrets: [env().sessionSecret],
    maxAge: SESSION_MAX_AGE_SECONDS,
  });
  return cookie;
}

const expiresAt = (expires: Date | undefined) => expires ?? new Date(Date.now() + SESSION_MAX_AGE_SECONDS * 1000);
const userIdOf = (data: Partial<SessionData>) => (typeof data.userId === "number" ? data.userId : null);

let storage: ReturnType<typeof createSessionStorage<SessionData, SessionFlash>> | undefined;

export function sessionStorage() {
  storage ??= createSessionStorage<SessionData, SessionFlash>({
    cookie: sessionCookie(),
    async createData(data, expires) {
      const id = newSessionId();
      const client = committing.getStore() ?? { ip: "", userAgent: "" };
      await db().insert(sessions).values({ id: sessionDigest(id), userId: userIdOf(data), data, expiresAt: expiresAt(expires), ip: client.ip, userAgent: client.userAgent });
      if (Math.random() < 0.02) await sweepExpiredSessions();
      return id;
    },
    async readData(id) {
      const [row] = await db().select({ data: sessions.data }).from(sessions).where(and(eq(sessions.id, sessionDigest(id)), gt(sessions.expiresAt, sql`NOW(3)`)));
      return (row?.data as Partial<SessionData>) ?? null;
    },
    // A row that is gone (signed out, ended from the account page) stays gone: its cookie is not written back to life.
    async updateData(id, data, expires) {
      await db().update(sessions).set({ data, userId: userIdOf(data), expiresAt: expiresAt(expires) }).where(eq(sessions.id, sessionDigest(id)));
    },
    async deleteData(id) {
      await db().delete(sessions).where(eq(sessions.id, sessionDigest(id)));
    },
  });
  return storage;
}

type RequestSession = { id: string; data: Partial<SessionData>; user: CurrentUser | null };
const sessionsOfRequests = new WeakMap<Request, Promise<RequestSession>>();

// One statement per request: the session's row and its user (with the lead families), read together.
async function readRequestSession(request: Request): Promise<RequestSession> {
  const id = await sessionCookie().parse(request.headers.get("Cookie"));
  if (typeof id !== "string" || id === "") return { id: "", data: {}, user: null };
  const digest = sessionDigest(id);
  const [row] = await db()
    .select({
      data: sessions.data,
      stale: sql<number>`${sessions.lastSeenAt} < NOW(3) - INTERVAL ${LAST_SEEN_STEP_SECONDS} SECOND`,
      user: currentUserColumns,
      active: users.active,
    })
    .from(sessions)
    .leftJoin(users, eq(users.id, sessions.userId))
    .where(and(eq(sessions.id, digest), gt(sessions.expiresAt, sql`NOW(3)`)))
    .limit(1);
  if (!row) return { id: "", data: {}, user: null };
  if (Number(row.stale)) void db().update(sessions).set({ lastSeenAt: sql`NOW(3)` }).where(eq(sessions.id, digest)).catch(() => undefined);
  const data = row.data as Partial<SessionData>;
  const signedInAt = data.signedInAt ?? 0;
  const signedIn = typeof data.userId === "number" && row.user !== null && row.active === true && Date.now() - signedInAt <= SESSION_MAX_AGE_SECONDS * 1000;
  return { id, data, user: signedIn ? toCurrentUser(row.user as Parameters<typeof toCurrentUser>[0]) : null };
}

function requestSession(request: Request): Promise<RequestSession> {
  let found = sessionsOfRequests.get(request);
  if (!found) {
    found = readRequestSession(request);
    sessionsOfRequests.set(request, found);
  }
  return found;
}

/** The signed-in user of this request (active, within the session's 12 hours), from the same read as its session. */
export async function sessionUser(request: Request): Promise<CurrentUser | null> {
  return (await requestSession(request)).user;
}

/** This request's session: every caller gets its own copy of the data, as a cookie session would give. */
export async function getSession(request: Request): Promise<AppSession> {
  const { id, data } = await requestSession(request);
  const session = createSession<SessionData, SessionFlash>(structuredClone(data) as SessionData, id);
  clientOfSession.set(session, clientOf(request));
  return session;
}

/** A new, empty session for this request (a new id once committed): after sign-in, so a session id never changes hands. */
export function freshSession(request: Request): AppSession {
  const session = createSession<SessionData, SessionFlash>();
  clientOfSession.set(session, clientOf(request));
  return session;
}

export async function commitSession(session: AppSession) {
  const client = clientOfSession.get(session) ?? { ip: "", userAgent: "" };
  return committing.run(client, () => sessionStorage().commitSession(session));
}

export async function destroySession(session: AppSession) {
  return sessionStorage().destroySession(session);
}

/** Ends one session by the id its cookie carried. */
export async function endSessionById(id: string): Promise<void> {
  if (id) await db().delete(sessions).where(eq(sessions.id, sessionDigest(id)));
}

/** Ends every session of a person: at deactivation, at a role change, or from their account page. */
export async function endSessionsOfUser(userId: number, except?: string): Promise<number> {
  const where = except ? and(eq(sessions.userId, userId), sql`${sessions.id} <> ${sessionDigest(except)}`) : eq(sessions.userId, userId);
  const [result] = await db().delete(sessions).where(where);
  return result.affectedRows;
}

export type SessionListRow = { handle: string; createdAt: Date; lastSeenAt: Date; expiresAt: Date; ip: string; userAgent: string; current: boolean };

/** A person's sessions for the account page; `handle` names one without being its secret id. */
export async function listSessionsOfUser(userId: number, currentId: string): Promise<SessionListRow[]> {
  const rows = await db()
    .select({ digest: sessions.id, createdAt: sessions.createdAt, lastSeenAt: sessions.lastSeenAt, expiresAt: sessions.expiresAt, ip: sessions.ip, userAgent: sessions.userAgent })
    .from(sessions)
    .where(and(eq(sessions.userId, userId), gt(sessions.expiresAt, sql`NOW(3)`)))
    .orderBy(sql`${sessions.lastSeenAt} DESC`);
  const mine = currentId ? sessionDigest(currentId) : "";
  return rows.map(({ digest, ...r }) => ({ ...r, handle: digest.slice(0, 24), current: digest === mine }));
}

/** Ends the session of `userId` whose handle is given; false when there is none. */
export async function endSessionByHandle(userId: number, handle: string): Promise<boolean> {
  if (!/^[0-9a-f]{24}$/.test(handle)) return false;
  const [result] = await db().delete(sessions).where(and(eq(sessions.userId, userId), sql`LEFT(${sessions.id}, 24) = ${handle}`));
  return result.affectedRows > 0;
}

/** The id the request's cookie carries ("" when none), to tell the current session apart. */
export async function sessionIdOf(request: Request): Promise<string> {
  return (await requestSession(request)).id;
}

export async function sweepExpiredSessions(): Promise<number> {
  const [result] = await db().delete(sessions).where(lt(sessions.expiresAt, sql`NOW(3)`));
  return result.affectedRows;
}

// A toast after a redirect, carried by the session.
export async function redirectWithFlash(request: Request, to: string, flash: SessionFlash["flash"], init?: ResponseInit) {
  const session = await getSession(request);
  session.flash("flash", flash);
  const headers = new Headers(init?.headers);
  headers.append("Set-Cookie", await commitSession(session));
  return redirect(to, { ...init, headers });
}

import { createHash, randomBytes } from "node:crypto";
import mysql from "mysql2/promise";
import { createCookie } from "react-router";
import type { BrowserContext } from "playwright-core";
import { inject } from "vitest";

// The tests' servers sign cookies with this secret (see app-server.ts), so a test can hold a session of its own.
export const TEST_SESSION_SECRET = "bandledger-test-session-secret-0123456789abcdef";

const cookie = createCookie("__bandledger", { httpOnly: true, sameSite: "lax", path: "/", secrets: [TEST_SESSION_SECRET] });

// Which database each app server of this test process serves, so a session can be written where it will be read.
const databaseOfApp = new Map<string, string>();
export function registerAppDatabase(appUrl: string, databaseUrl: string): void {
  databaseOfApp.set(new URL(appUrl).origin, databaseUrl);
}
function databaseFor(appUrl: string): string {
  const known = databaseOfApp.get(new URL(appUrl).origin);
  if (known) return known;
  // Browser tests: their server was started by the project's global set-up, in another process.
  const e2e = (() => {
    try {
      return inject("e2eDatabaseUrl");
    } catch {
      return undefined;
    }
  })();
  if (e2e) return e2e;
  throw new Error(`no database known for the app at ${appUrl}: start it with startAppServer or pass the database`);
}

const pools = new Map<string, mysql.Pool>();
function poolFor(databaseUrl: string): mysql.Pool {
  let pool = pools.get(databaseUrl);
  if (!pool) {
    pool = mysql.createPool({ uri: databaseUrl, connectionLimit: 2 });
    pools.set(databaseUrl, pool);
  }
  return pool;
}

/** A signed-in session for `userId`, written into the app's sessions table as sign-in writes it; returns the cookie value. */
export async function sessionCookieValue(userId: number, databaseUrl: string, options: { signedInAt?: number } = {}): Promise<string> {
  const id = randomBytes(32).toString("base64url");
  const digest = createHash("sha256").update(id).digest("hex");
  const data = JSON.stringify({ userId, signedInAt: options.signedInAt ?? Date.now() });
  await poolFor(databaseUrl).query(
    "INSERT INTO sessions (id, user_id, data, expires_at, ip, user_agent) VALUES (?, ?, ?, NOW(3) + INTERVAL 12 HOUR, '127.0.0.1', 'bandledger tests')",
    [digest, userId, data],
  );
  const header = await cookie.serialize(id);
  return header.split(";")[0].slice("__bandledger=".length);
}

/** The same for the app at `appUrl` (its database is known from startAppServer, or is the browser tests' one). */
export function sessionCookieFor(appUrl: string, userId: number): Promise<string> {
  return sessionCookieValue(userId, databaseFor(appUrl));
}

export async function signInAs(context: BrowserContext, appUrl: string, userId: number): Promise<void> {
  await context.addCookies([{ name: "__bandledger", value: await sessionCookieFor(appUrl, userId), url: appUrl, httpOnly: true, sameSite: "Lax" }]);
}

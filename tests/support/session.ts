import { createCookieSessionStorage } from "react-router";
import type { BrowserContext } from "playwright-core";

// The browser tests' server signs cookies with this secret (see app-server.ts), so a test can be signed in directly.
export const TEST_SESSION_SECRET = "bandledger-test-session-secret-0123456789abcdef";

const storage = createCookieSessionStorage({
  cookie: { name: "__bandledger", httpOnly: true, sameSite: "lax", path: "/", secrets: [TEST_SESSION_SECRET] },
});

export async function sessionCookieValue(userId: number): Promise<string> {
  const session = await storage.getSession();
  session.set("userId", userId);
  session.set("signedInAt", Date.now());
  const header = await storage.commitSession(session);
  return header.split(";")[0].slice("__bandledger=".length);
}

export async function signInAs(context: BrowserContext, appUrl: string, userId: number): Promise<void> {
  await context.addCookies([{ name: "__bandledger", value: await sessionCookieValue(userId), url: appUrl, httpOnly: true, sameSite: "Lax" }]);
}

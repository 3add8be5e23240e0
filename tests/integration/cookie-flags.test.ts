import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiTokens, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { SESSION_MAX_AGE_SECONDS } from "~/.server/session";
import { generateToken } from "~/.server/tokens";
import { loadDemo } from "../../seed-data/load";
import { TEAM_DOMAIN } from "../../seed-data/team";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { readLastMail } from "../support/mailbox";
import { HttpClient } from "../support/route-access";

// The flags of every cookie the sign-in flow sets, read from the real Set-Cookie headers of the production build,
// once behind a plain http address and once behind an https public address (TRUST_PROXY=127.0.0.1, as behind a TLS proxy on the same host);
// and the security headers of rendered pages and of API answers. tests/browser/home.test.ts already covers the
// home page's nonce changing per request, nosniff and frame-ancestors; this file covers the rest.

const PUBLIC_HTTPS = "https://ledger.kestrel-devices.test";

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let plain: AppServer;
let behindTls: AppServer;
let token: string;
let ip = 0;

beforeAll(async () => {
  t = await freshDatabase("cookieflags");
  await loadDemo(t.db);
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-cookie-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  const common = { databaseUrl: t.url, smtpPort: sink.port, mailboxDir };
  [plain, behindTls] = await Promise.all([
    startAppServer({ ...common, extraEnv: { TRUST_PROXY: "127.0.0.1" } }),
    startAppServer({ ...common, extraEnv: { TRUST_PROXY: "127.0.0.1", BANDLEDGER_PUBLIC_URL: PUBLIC_HTTPS, BANDLEDGER_MAILBOX: "off" } }),
  ]);
  const [priya] = await t.db.select({ id: users.id }).from(users).where(eq(users.email, `priya.raman@${TEAM_DOMAIN}`));
  const g = generateToken();
  await t.db.insert(apiTokens).values({ userId: priya.id, name: "cookie-flags", tokenHash: g.hash, prefix: g.prefix });
  token = g.token;
});
afterAll(async () => {
  await Promise.all([plain?.stop(), behindTls?.stop()]);
  await sink?.close();
  await t?.drop();
});

type SetCookie = { name: string; value: string; attrs: Map<string, string | true>; line: string };

function setCookies(r: Response): SetCookie[] {
  return r.headers.getSetCookie().map((line) => {
    const [pair, ...rest] = line.split(";");
    const i = pair.indexOf("=");
    const attrs = new Map<string, string | true>();
    for (const a of rest) {
      const j = a.indexOf("=");
      if (j < 0) attrs.set(a.trim().toLowerCase(), true);
      else attrs.set(a.slice(0, j).trim().toLowerCase(), a.slice(j + 1).trim());
    }
    return { name: pair.slice(0, i).trim(), value: pair.slice(i + 1).trim(), attrs, line };
  });
}

/** HttpOnly, SameSite Lax or Strict, Path=/, Secure exactly when the public address is https, and a lifetime bound. */
function expectFlags(c: SetCookie, options: { secure: boolean; maxAgeSeconds?: number }) {
  expect(c.attrs.get("httponly"), c.line).toBe(true);
  expect(String(c.attrs.get("samesite")).toLowerCase(), c.line).toMatch(/^(lax|strict)$/);
  expect(c.attrs.get("path"), c.line).toBe("/");
  expect(c.attrs.has("secure"), c.line).toBe(options.secure);
  expect(c.attrs.has("domain"), `${c.line}: a host-only cookie`).toBe(false);
  const maxAge = c.attrs.get("max-age");
  const expires = c.attrs.get("expires");
  expect(maxAge !== undefined || expires !== undefined, `${c.line}: Max-Age or Expires`).toBe(true);
  if (options.maxAgeSeconds !== undefined) {
    if (maxAge !== undefined) expect(Number(maxAge), c.line).toBe(options.maxAgeSeconds);
    if (typeof expires === "string") {
      const left = (Date.parse(expires) - Date.now()) / 1000;
      expect(left, c.line).toBeGreaterThan(options.maxAgeSeconds - 120);
      expect(left, c.line).toBeLessThan(options.maxAgeSeconds + 120);
    }
  }
}

const cookieNamed = (r: Response, name: string) => setCookies(r).filter((c) => c.name === name);

function client(server: AppServer) {
  ip += 1;
  return new HttpClient(server.url, { "x-forwarded-for": `198.51.100.${ip}` });
}

async function codeAndLink(email: string, after: number) {
  const mail = await readLastMail(mailboxDir, email, { after });
  const code = /\b(\d{6})\b/.exec(mail.text)?.[1];
  const link = /(https?:\/\/\S+\/auth\/magic-link\?t=\S+)/.exec(mail.text)?.[1];
  if (!code || !link) throw new Error(`no code or link in: ${mail.text}`);
  return { code, link: new URL(link) };
}

for (const [label, secure] of [["a plain http address", false], ["an https public address behind a proxy", true]] as const) {
  describe(`session cookies at ${label}`, () => {
    const server = () => (secure ? behindTls : plain);

    it("sets every cookie of the code sign-in HttpOnly, SameSite, Path=/, with a lifetime, Secure only for https", async () => {
      const c = client(server());
      const email = secure ? `hanna.lindqvist@${TEAM_DOMAIN}` : `ravi.menon@${TEAM_DOMAIN}`;
      const after = Date.now();
      const asked = await c.post("/sign-in", { email, returnTo: "/account" });
      expect(asked.status).toBe(302);
      const pending = cookieNamed(asked, "__bandledger");
      expect(pending).toHaveLength(1);
      expectFlags(pending[0], { secure, maxAgeSeconds: SESSION_MAX_AGE_SECONDS });
      // The code strategy's own cookie, 10 minutes like the code.
      const totp = setCookies(asked).filter((x) => x.name !== "__bandledger");
      expect(totp.length).toBeGreaterThan(0);
      for (const x of totp) expectFlags(x, { secure, maxAgeSeconds: 600 });

      const { code } = await codeAndLink(email, after);
      const done = await c.post("/sign-in/code", { intent: "verify", code });
      expect(done.status).toBe(302);
      expect(done.headers.get("location")).toBe("/account");
      const session = cookieNamed(done, "__bandledger");
      expect(session).toHaveLength(1);
      expectFlags(session[0], { secure, maxAgeSeconds: SESSION_MAX_AGE_SECONDS });
      expect(session[0].value).not.toBe(pending[0].value);
      expect((await c.get("/account")).status).toBe(200);

      // Signing out sends the cookie back with the same flags, and it no longer opens a page.
      const out = await c.post("/sign-out", {});
      expect(out.status).toBe(302);
      for (const x of cookieNamed(out, "__bandledger")) {
        expect(x.attrs.get("httponly")).toBe(true);
        expect(x.attrs.has("secure")).toBe(secure);
        expect(x.attrs.get("path")).toBe("/");
      }
      expect((await c.get("/account")).headers.get("location")).toBe("/sign-in?returnTo=%2Faccount");
    });

    it("sets the same flags when the mailed link signs in", async () => {
      const c = client(server());
      const email = secure ? `tomas.okafor@${TEAM_DOMAIN}` : `mei.tanaka@${TEAM_DOMAIN}`;
      const after = Date.now();
      expect((await c.post("/sign-in", { email })).status).toBe(302);
      const { link } = await codeAndLink(email, after);
      // The link names the public address; the request goes to this server as a proxy would pass it on.
      expect(link.origin).toBe(secure ? PUBLIC_HTTPS : server().url);
      const done = await c.get(link.pathname + link.search);
      expect(done.status).toBe(302);
      const session = cookieNamed(done, "__bandledger");
      expect(session).toHaveLength(1);
      expectFlags(session[0], { secure, maxAgeSeconds: SESSION_MAX_AGE_SECONDS });
      expect((await c.get("/account")).status).toBe(200);
    });

    it("keeps a form posted without a session in a cookie with the same flags (one hour)", async () => {
      const c = client(server());
      const r = await c.post("/proposals/new", { intent: "save", material: "GaAs", quantity: "eg", value: "1.42" });
      expect(r.status).toBe(302);
      expect(r.headers.get("location")).toBe("/sign-in?returnTo=%2Fproposals%2Frestore");
      const kept = cookieNamed(r, "__bandledger_kept");
      expect(kept).toHaveLength(1);
      expectFlags(kept[0], { secure, maxAgeSeconds: 3600 });
    });
  });
}

// ---- security headers -------------------------------------------------------------------------------------

function nonceOf(r: Response): string {
  const csp = r.headers.get("content-security-policy") ?? "";
  const nonce = /script-src [^;]*'nonce-([A-Za-z0-9+/=]+)'/.exec(csp)?.[1];
  expect(nonce, csp).toBeTruthy();
  return nonce!;
}

function expectCommonHeaders(r: Response, secure: boolean) {
  const h = r.headers;
  expect(h.get("x-content-type-options")).toBe("nosniff");
  expect(h.get("referrer-policy")).toMatch(/^(same-origin|strict-origin|strict-origin-when-cross-origin|no-referrer)$/);
  const csp = h.get("content-security-policy") ?? "";
  expect(h.get("x-frame-options") === "DENY" || /frame-ancestors 'none'/.test(csp), "framing refused").toBe(true);
  expect(csp).toMatch(/frame-ancestors 'none'/);
  if (secure) expect(h.get("strict-transport-security")).toMatch(/max-age=\d{7,}/);
  else expect(h.get("strict-transport-security")).toBeNull();
}

async function signedInClient(server: AppServer, person: string) {
  const [u] = await t.db.select({ id: users.id }).from(users).where(eq(users.email, `${person}@${TEAM_DOMAIN}`));
  return HttpClient.signedIn(server.url, u.id, { "x-forwarded-for": "198.51.100.200" });
}

describe("security headers of rendered pages", () => {
  const pages: [string, (s: AppServer) => Promise<Response>, number][] = [
    ["the sign-in page", (s) => new HttpClient(s.url).get("/sign-in"), 200],
    ["the registry, signed in", async (s) => (await signedInClient(s, "priya.raman")).get("/registry"), 200],
    ["a proposal page, signed in", async (s) => (await signedInClient(s, "ravi.menon")).get("/proposals/1"), 200],
    ["the 404 page", (s) => new HttpClient(s.url).get("/no/such/page"), 404],
    ["a refused form (415)", async (s) => (await signedInClient(s, "tomas.okafor")).request("/sets/new", { method: "POST", headers: { "content-type": "application/json" } }), 415],
  ];

  for (const [name, load, status] of pages) {
    it(`${name}: a fresh nonce per response that every script tag carries, and the usual headers`, async () => {
      for (const [server, secure] of [[plain, false], [behindTls, true]] as const) {
        const first = await load(server);
        const second = await load(server);
        expect(first.status).toBe(status);
        expect(first.headers.get("content-type")).toMatch(/^text\/html/);
        expectCommonHeaders(first, secure);
        const csp = first.headers.get("content-security-policy")!;
        const scriptSrc = /script-src ([^;]*)/.exec(csp)?.[1] ?? "";
        expect(scriptSrc).not.toMatch(/'unsafe-inline'|'unsafe-eval'|\*/);
        expect(csp).toMatch(/object-src 'none'/);
        expect(csp).toMatch(/base-uri 'self'/);
        const nonce = nonceOf(first);
        expect(nonceOf(second)).not.toBe(nonce);
        const html = await first.text();
        await second.text();
        const scripts = [...html.matchAll(/<script\b([^>]*)>/gi)].map((m) => m[1]);
        expect(scripts.length).toBeGreaterThan(0);
        for (const attrs of scripts) expect(/\snonce="([^"]+)"/.exec(attrs)?.[1], `<script${attrs}>`).toBe(nonce);
        // The page never names another response's nonce.
        expect(html).not.toContain(nonceOf(second));
      }
    });
  }
});

describe("security headers of API and download answers", () => {
  const answers: [string, string, Record<string, string> | "token", number][] = [
    ["records as JSON", "/api/v1/records?limit=2", "token", 200],
    ["the 401 without a token", "/api/v1/records", {}, 401],
    ["the 404 of an unknown endpoint", "/api/v1/no-such-endpoint", {}, 404],
    ["the OpenAPI document", "/api/v1/openapi.json", {}, 200],
    ["a release download", "/api/v1/sets/hemt-baseline/releases/3/download?format=csv", "token", 200],
    ["the health check", "/healthz", {}, 200],
  ];
  for (const [name, pathname, headers, status] of answers) {
    it(`${name}: nosniff, no framing, a referrer policy and a policy under which nothing runs`, async () => {
      for (const [server, secure] of [[plain, false], [behindTls, true]] as const) {
        const r = await fetch(server.url + pathname, { headers: headers === "token" ? { authorization: `Bearer ${token}` } : headers, redirect: "manual" });
        expect(r.status).toBe(status);
        expectCommonHeaders(r, secure);
        expect(r.headers.get("content-security-policy")).toMatch(/default-src 'none'/);
        expect(r.headers.get("set-cookie")).toBeNull();
        await r.arrayBuffer();
      }
    });
  }
});

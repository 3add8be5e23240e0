import { createHash } from "node:crypto";
import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLog, sessions, signInCodes, signInRequests, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { loadTeam } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { readLastMail, readMailbox } from "../support/mailbox";
import { HttpClient } from "../support/route-access";
import { waitFor } from "../support/faults";
import { sessionCookieValue } from "../support/session";

const RAVI = "ravi.menon@kestrel-devices.test";
const PRIYA = "priya.raman@kestrel-devices.test";
const MEI = "mei.tanaka@kestrel-devices.test";
const TOMAS = "tomas.okafor@kestrel-devices.test";
const HANNA = "hanna.lindqvist@kestrel-devices.test";
const JONAS = "jonas.weber@kestrel-devices.test";

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let app: AppServer;
let ipCounter = 0;

// Behind TRUST_PROXY=127.0.0.1 (a proxy on this host) every test speaks from an address of its own, so the per-address limit of one test never meets another's.
function client(extra: Record<string, string> = {}) {
  ipCounter += 1;
  return new HttpClient(app.url, { "x-forwarded-for": `203.0.113.7, 10.9.0.${ipCounter}`, ...extra });
}

async function requestCode(c: HttpClient, email: string, returnTo = "/") {
  const after = Date.now();
  const r = await c.post("/sign-in", { email, returnTo });
  return { r, after };
}

async function codeFromMail(email: string, after: number) {
  const mail = await readLastMail(mailboxDir, email, { after });
  const code = /\b(\d{6})\b/.exec(mail.text)?.[1];
  if (!code) throw new Error(`no code in: ${mail.text}`);
  const link = /(http:\/\/\S+\/auth\/magic-link\?t=\S+)/.exec(mail.text)?.[1];
  return { mail, code, link: link! };
}

function otherCode(code: string) {
  return String((Number(code) + 1) % 1_000_000).padStart(6, "0");
}

beforeAll(async () => {
  t = await freshDatabase("authsignin");
  await loadTeam(t.db);
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-auth-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { TRUST_PROXY: "127.0.0.1" } });
});
afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await t?.drop();
});

describe("sign-in by e-mailed code", () => {
  it("mails a six-digit code with a text and an HTML part, and the code signs in and returns to the page asked for", async () => {
    const c = client();
    const { r, after } = await requestCode(c, RAVI, "/account");
    expect(r.status).toBe(302);
    expect(r.headers.get("location")).toBe("/sign-in/code");
    const { mail, code } = await codeFromMail(RAVI, after);
    expect(code).toMatch(/^\d{6}$/);
    expect(mail.subject).toContain(code);
    expect(mail.html).toContain(code);
    expect(mail.text).toContain("10 minutes");
    expect(mail.parsed.from?.text).toContain("Bandledger");

    const page = await c.get("/sign-in/code");
    expect(page.status).toBe(200);
    expect(await page.text()).toContain("a six-digit code and a sign-in link");

    const done = await c.post("/sign-in/code", { intent: "verify", code });
    expect(done.status).toBe(302);
    expect(done.headers.get("location")).toBe("/account");
    const account = await c.get("/account");
    expect(account.status).toBe(200);
    expect(await account.text()).toContain("Ravi Menon");

    const [ravi] = await t.db.select().from(users).where(eq(users.email, RAVI));
    expect(ravi.lastSignInAt).toBeInstanceOf(Date);
    const rows = await t.db.select().from(auditLog).where(eq(auditLog.actorId, ravi.id));
    const signIn = rows.find((row) => row.action === "auth.sign_in");
    expect(signIn?.ip).toBe(`10.9.0.${ipCounter}`);
    expect(signIn?.detail).toEqual({ via: "code" });
    expect(rows.find((row) => row.action === "auth.code_requested")?.detail).toEqual({ known: true });
  });

  it("refuses a wrong code, says how many tries are left, and voids the code after the third wrong try", async () => {
    const c = client();
    const { after } = await requestCode(c, HANNA);
    const { code } = await codeFromMail(HANNA, after);
    const wrong = otherCode(code);

    const first = await c.post("/sign-in/code", { intent: "verify", code: wrong });
    expect(first.status).toBe(400);
    const firstHtml = await first.text();
    expect(firstHtml).toContain("That code does not match");
    expect(firstHtml).toContain("2 tries left");
    expect(await (await c.post("/sign-in/code", { intent: "verify", code: wrong })).text()).toContain("1 try left");
    const third = await (await c.post("/sign-in/code", { intent: "verify", code: wrong })).text();
    expect(third).toContain("void after three wrong tries");

    const withRightCode = await c.post("/sign-in/code", { intent: "verify", code });
    expect(withRightCode.status).toBe(400);
    expect(await withRightCode.text()).toContain("void after three wrong tries");
    expect((await c.get("/account")).headers.get("location")).toBe("/sign-in?returnTo=%2Faccount");

    const failures = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "auth.code_failed"), eq(auditLog.actorEmail, HANNA)));
    expect(failures.filter((f) => (f.detail as { reason: string }).reason === "code-wrong")).toHaveLength(3);
  });

  it("refuses a code that is not six digits without counting it as a try", async () => {
    const c = client();
    const { after } = await requestCode(c, MEI);
    const { code } = await codeFromMail(MEI, after);
    const r = await c.post("/sign-in/code", { intent: "verify", code: "12ab" });
    expect(r.status).toBe(400);
    expect(await r.text()).toContain("Enter the six digits from the e-mail.");
    expect((await c.post("/sign-in/code", { intent: "verify", code })).status).toBe(302);
  });

  it("signs in through the magic link in the browser that asked, and refuses it in any other", async () => {
    const asking = client();
    const { after } = await requestCode(asking, PRIYA, "/account");
    const { link } = await codeFromMail(PRIYA, after);
    expect(link.startsWith(app.url + "/auth/magic-link?t=")).toBe(true);

    const elsewhere = client();
    const refused = await elsewhere.get(link);
    expect(refused.status).toBe(302);
    expect(refused.headers.get("location")).toBe("/sign-in");
    expect((await elsewhere.get("/account")).status).toBe(302);

    const ok = await asking.get(link);
    expect(ok.status).toBe(302);
    expect(ok.headers.get("location")).toBe("/account");
    expect((await asking.get("/account")).status).toBe(200);
    const [priya] = await t.db.select().from(users).where(eq(users.email, PRIYA));
    const rows = await t.db.select().from(auditLog).where(and(eq(auditLog.actorId, priya.id), eq(auditLog.action, "auth.sign_in")));
    expect(rows.at(-1)?.detail).toEqual({ via: "link" });
  });

  it("refuses a code whose address was swapped in the strategy's unsigned cookie", async () => {
    const attacker = client();
    const { after } = await requestCode(attacker, TOMAS);
    const { code } = await codeFromMail(TOMAS, after);
    const raw = attacker.cookies.get("_totp")!;
    const params = new URLSearchParams(raw);
    params.set("email", RAVI);
    attacker.cookies.set("_totp", params.toString());
    const r = await attacker.post("/sign-in/code", { intent: "verify", code });
    expect(r.status).toBe(400);
    expect((await attacker.get("/account")).status).toBe(302);
  });

  it("refuses two _totp cookies: a valid code for one's own address never signs in as another person", async () => {
    const [ravi] = await t.db.select().from(users).where(eq(users.email, RAVI));
    const raviSignIns = async () => (await t.db.select().from(auditLog).where(and(eq(auditLog.actorId, ravi.id), eq(auditLog.action, "auth.sign_in")))).length;
    const signInsBefore = await raviSignIns();
    const attacker = client();
    const own = await requestCode(attacker, TOMAS);
    const { code } = await codeFromMail(TOMAS, own.after);
    const ownRecord = attacker.cookies.get("_totp")!;
    await requestCode(attacker, RAVI);
    const victimRecord = attacker.cookies.get("_totp")!;
    // The first cookie is the victim's genuine record; the second carries the attacker's code record under the victim's address.
    const swapped = new URLSearchParams(ownRecord);
    swapped.set("email", RAVI);
    attacker.cookies.set("_totp", `${victimRecord}; _totp=${swapped.toString()}`);
    const r = await attacker.post("/sign-in/code", { intent: "verify", code });
    expect(r.status).toBe(400);
    expect(await r.text()).toContain("This browser holds more than one sign-in code");
    expect((await attacker.get("/account")).status).toBe(302);
    expect(await raviSignIns()).toBe(signInsBefore);

    // The same pair in the other order, and through the link, are refused as well.
    attacker.cookies.set("_totp", `${swapped.toString()}; _totp=${victimRecord}`);
    expect((await attacker.post("/sign-in/code", { intent: "verify", code })).status).toBe(400);
    expect((await attacker.get("/account")).status).toBe(302);
    expect(await raviSignIns()).toBe(signInsBefore);

    const { link } = await codeFromMail(TOMAS, own.after);
    const viaLink = await attacker.get(link);
    expect(viaLink.headers.get("location")).toBe("/sign-in/code");
    expect((await attacker.get("/account")).status).toBe(302);
    expect(await raviSignIns()).toBe(signInsBefore);
  });

  it("checks at most three codes however many arrive at once, and a used code cannot sign in again", async () => {
    const c = client();
    const { after } = await requestCode(c, MEI);
    const { code } = await codeFromMail(MEI, after);
    const wrong = otherCode(code);
    const answers = await Promise.all(Array.from({ length: 12 }, () => c.request("/sign-in/code", { method: "POST", form: { intent: "verify", code: wrong } }).then((r) => r.text())));
    expect(answers.filter((html) => html.includes("That code does not match")).length).toBeLessThanOrEqual(3);
    const [row] = await t.db.select().from(signInCodes).where(eq(signInCodes.digest, createHash("sha256").update(JSON.parse(new URLSearchParams(c.cookies.get("_totp")!).get("totp")!).jwe).digest("hex")));
    expect(row.tries).toBe(3);
    expect((await c.post("/sign-in/code", { intent: "verify", code })).status).toBe(400);

    // A fresh code signs in once: the same browser state sent twice at once (or replayed later) opens one session.
    const [priya] = await t.db.select().from(users).where(eq(users.email, PRIYA));
    const priyaSignIns = async () => (await t.db.select().from(auditLog).where(and(eq(auditLog.actorId, priya.id), eq(auditLog.action, "auth.sign_in")))).length;
    const signInsBefore = await priyaSignIns();
    const again = client();
    const second = await requestCode(again, PRIYA);
    const { code: fresh } = await codeFromMail(PRIYA, second.after);
    const copied = new Map(again.cookies);
    const twins = [client(), client()];
    for (const twin of twins) for (const [k, v] of copied) twin.cookies.set(k, v);
    const twinAnswers = await Promise.all(twins.map((twin) => twin.post("/sign-in/code", { intent: "verify", code: fresh })));
    const texts = await Promise.all(twinAnswers.map((a) => a.text()));
    expect(twinAnswers.filter((a) => a.status === 302 && a.headers.get("location") === "/").length, texts.join("\n")).toBe(1);
    expect(await priyaSignIns()).toBe(signInsBefore + 1);
    const replay = client();
    for (const [k, v] of copied) replay.cookies.set(k, v);
    const refused = await replay.post("/sign-in/code", { intent: "verify", code: fresh });
    expect(refused.headers.get("location") ?? "").not.toBe("/");
    expect((await replay.get("/account")).status).toBe(302);
    expect(await priyaSignIns()).toBe(signInsBefore + 1);
  });

  it("limits code submissions per client address, whichever codes they carry", async () => {
    const c = client();
    const statuses: number[] = [];
    for (let i = 0; i < 22; i++) {
      if (i % 3 === 0) await requestCode(c, `limit${i}@kestrel-devices.test`);
      statuses.push((await c.post("/sign-in/code", { intent: "verify", code: "000000" })).status);
    }
    expect(statuses.slice(0, 20).every((s) => s === 400)).toBe(true);
    expect(statuses.slice(20)).toEqual([429, 429]);
  });

  it("sends a new code on request, after which only the new code works; another address starts over", async () => {
    const c = client();
    const { after } = await requestCode(c, RAVI);
    const { code: first } = await codeFromMail(RAVI, after);
    const resendAt = Date.now();
    const resent = await c.post("/sign-in/code", { intent: "resend" });
    expect(resent.headers.get("location")).toBe("/sign-in/code");
    const { code: second } = await codeFromMail(RAVI, resendAt);
    if (first !== second) expect((await c.post("/sign-in/code", { intent: "verify", code: first })).status).toBe(400);
    expect((await c.post("/sign-in/code", { intent: "verify", code: second })).status).toBe(302);

    const other = client();
    await requestCode(other, "someone.else@kestrel-devices.test");
    expect((await other.post("/sign-in/code", { intent: "restart" })).headers.get("location")).toBe("/sign-in");
    expect((await other.get("/sign-in/code")).headers.get("location")).toBe("/sign-in");
  });

  it("never returns to another site after sign-in", async () => {
    const c = client();
    const { after } = await requestCode(c, MEI, "//evil.example/steal");
    const { code } = await codeFromMail(MEI, after);
    const r = await c.post("/sign-in/code", { intent: "verify", code });
    expect(r.headers.get("location")).toBe("/");
  });
});

describe("no account enumeration", () => {
  it("answers an unknown or deactivated address exactly as a known one, and mails only the known one", async () => {
    const answers = [];
    const started = Date.now();
    for (const email of [PRIYA, "nobody@kestrel-devices.test", JONAS]) {
      const c = client();
      const r = await c.post("/sign-in", { email, returnTo: "/" });
      const page = await c.get("/sign-in/code");
      answers.push({
        status: r.status,
        location: r.headers.get("location"),
        cookies: [...c.cookies.keys()].sort(),
        page: (await page.text())
          .replaceAll(email, "ADDRESS")
          .replace(/nonce="[^"]+"/g, "NONCE")
          .replace(/\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z/g, "ISO")
          .replace(/<time[^>]*>[^<]*<\/time>/g, "TIME"),
        pageStatus: page.status,
      });
    }
    expect(answers[1]).toEqual(answers[0]);
    expect(answers[2]).toEqual(answers[0]);
    await readLastMail(mailboxDir, PRIYA, { after: started });
    await new Promise((r) => setTimeout(r, 1_000));
    const mails = await readMailbox(mailboxDir);
    expect(mails.filter((m) => m.to.includes("nobody@kestrel-devices.test") || m.to.includes(JONAS))).toEqual([]);
    const unknown = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "auth.code_requested"), eq(auditLog.actorEmail, "nobody@kestrel-devices.test")));
    expect(unknown[0].detail).toEqual({ known: false });
  });

  it("refuses an unknown address even with a guessed code", async () => {
    const c = client();
    await c.post("/sign-in", { email: "nobody2@kestrel-devices.test", returnTo: "/" });
    const r = await c.post("/sign-in/code", { intent: "verify", code: "123456" });
    expect(r.status).toBe(400);
    expect((await c.get("/account")).status).toBe(302);
  });
});

describe("rate limit on code requests", () => {
  it("allows five requests per address in 15 minutes and then names the time to try again", async () => {
    const address = "rate.limit@kestrel-devices.test";
    for (let i = 0; i < 5; i++) expect((await client().post("/sign-in", { email: address, returnTo: "/" })).status).toBe(302);
    const before = Date.now();
    const refused = await client().post("/sign-in", { email: address, returnTo: "/" });
    expect(refused.status).toBe(429);
    const html = await refused.text();
    const hhmm = /Too many codes requested; try again at <time[^>]*>(\d\d:\d\d) UTC<\/time>/.exec(html)?.[1];
    expect(hhmm).toBeDefined();
    // The first request leaves the 15-minute window about 15 minutes from now; the message rounds up to the minute.
    const expected = new Date(Math.ceil((before + 15 * 60_000) / 60_000) * 60_000).toISOString().slice(11, 16);
    const later = new Date(Math.ceil((before + 15 * 60_000 + 60_000) / 60_000) * 60_000).toISOString().slice(11, 16);
    expect([expected, later]).toContain(hhmm);
    const rows = await t.db.select().from(signInRequests).where(eq(signInRequests.email, address));
    expect(rows).toHaveLength(5);
  });

  it("allows five requests per client address, whatever addresses they name", async () => {
    const c = client();
    for (let i = 0; i < 5; i++) expect((await c.post("/sign-in", { email: `spray${i}@kestrel-devices.test`, returnTo: "/" })).status).toBe(302);
    const refused = await c.post("/sign-in", { email: "spray-last@kestrel-devices.test", returnTo: "/" });
    expect(refused.status).toBe(429);
    expect(await refused.text()).toContain("Too many codes requested; try again at");
  });

  it("uses the socket address, not X-Forwarded-For, unless the socket's peer is a proxy TRUST_PROXY lists", async () => {
    const plain = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir });
    try {
      for (let i = 0; i < 5; i++) {
        const forged = new HttpClient(plain.url, { "x-forwarded-for": `198.51.100.${i}` });
        expect((await forged.post("/sign-in", { email: `forged${i}@kestrel-devices.test`, returnTo: "/" })).status).toBe(302);
      }
      const sixth = new HttpClient(plain.url, { "x-forwarded-for": "198.51.100.99" });
      expect((await sixth.post("/sign-in", { email: "forged-last@kestrel-devices.test", returnTo: "/" })).status).toBe(429);
      const rows = await t.db.select().from(signInRequests).where(eq(signInRequests.email, "forged0@kestrel-devices.test"));
      expect(rows[0].ip).toBe("127.0.0.1");
    } finally {
      await plain.stop();
    }
    // Another proxy is listed: 127.0.0.1 is not it, so a fresh address in X-Forwarded-For does not escape its limit.
    const elsewhere = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { TRUST_PROXY: "10.9.9.9, 192.0.2.0/24" } });
    try {
      const forged = new HttpClient(elsewhere.url, { "x-forwarded-for": "198.51.100.200" });
      expect((await forged.post("/sign-in", { email: "listed-elsewhere@kestrel-devices.test", returnTo: "/" })).status).toBe(429);
    } finally {
      await elsewhere.stop();
    }
  });
});

describe("sessions and sign-out", () => {
  it("sends an expired session to sign in with the page it was on, React Router's data suffix removed", async () => {
    const [ravi] = await t.db.select().from(users).where(eq(users.email, RAVI));
    const c = client();
    c.cookies.set("__bandledger", await sessionCookieValue(ravi.id, t.url, { signedInAt: Date.now() - 13 * 3600_000 }));
    const r = await c.get("/account?tab=tokens");
    expect(r.status).toBe(302);
    expect(r.headers.get("location")).toBe("/sign-in?returnTo=%2Faccount%3Ftab%3Dtokens");
    const dataRequest = await c.post("/account.data", { intent: "profile", name: "Kept" });
    const body = await dataRequest.text();
    expect(body).toContain("/sign-in?returnTo=%2Faccount");
    expect(body).not.toContain("account.data");
  });

  it("signs out only from our own pages: a foreign or missing Origin is refused", async () => {
    const [mei] = await t.db.select().from(users).where(eq(users.email, MEI));
    const c = await HttpClient.signedIn(app.url, mei.id, { "x-forwarded-for": "10.8.0.1" });
    const foreign = await c.post("/sign-out", {}, { origin: "http://evil.example" });
    expect(foreign.status).toBe(403);
    expect(await foreign.json()).toEqual({ error: { code: "foreign_origin", message: expect.any(String), field: null } });
    expect((await c.post("/sign-out", {}, { origin: null })).status).toBe(403);
    expect((await c.get("/account")).status).toBe(200);

    const out = await c.post("/sign-out", {});
    expect(out.status).toBe(302);
    expect((await c.get("/account")).status).toBe(302);
    const rows = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "auth.sign_out"), eq(auditLog.actorId, mei.id)));
    expect(rows).toHaveLength(1);
    expect(rows[0].ip).toBe("10.8.0.1");
  });

  it("keeps sessions on the server: signing out ends a copied cookie, and signing in gives a new session id", async () => {
    const c = client();
    const { after } = await requestCode(c, TOMAS);
    const { code } = await codeFromMail(TOMAS, after);
    const before = c.cookies.get("__bandledger")!;
    expect((await c.post("/sign-in/code", { intent: "verify", code })).status).toBe(302);
    const signedIn = c.cookies.get("__bandledger")!;
    expect(signedIn).not.toBe(before);
    // The session that asked for the code is gone: its cookie signs no one in.
    const asker = client();
    asker.cookies.set("__bandledger", before);
    expect((await asker.get("/account")).status).toBe(302);
    // A copy of the signed-in cookie works until its owner signs out, then nowhere.
    const copy = client();
    copy.cookies.set("__bandledger", signedIn);
    expect((await copy.get("/account")).status).toBe(200);
    expect((await c.post("/sign-out", {})).status).toBe(302);
    expect((await copy.get("/account")).status).toBe(302);
    const [row] = await t.db.select({ n: sql<number>`COUNT(*)` }).from(sessions).where(eq(sessions.id, createHash("sha256").update(JSON.parse(Buffer.from(decodeURIComponent(signedIn).split(".")[0], "base64").toString("utf8"))).digest("hex")));
    expect(Number(row.n)).toBe(0);
    // Only a digest of each id is kept, never the id the cookie carries.
    const ids = (await t.db.select({ id: sessions.id }).from(sessions)).map((r) => r.id);
    expect(ids.every((id) => /^[0-9a-f]{64}$/.test(id))).toBe(true);
  });

  it("lists a person's sessions on the account page and ends one, or every other", async () => {
    const [hanna] = await t.db.select().from(users).where(eq(users.email, HANNA));
    const [here, laptop, pipeline] = await Promise.all([0, 1, 2].map(() => HttpClient.signedIn(app.url, hanna.id)));
    const page = await (await here.get("/account")).text();
    const handles = [...page.matchAll(/name="session" value="([0-9a-f]{24})"/g)].map((m) => m[1]);
    expect(handles.length).toBeGreaterThanOrEqual(2);
    expect(page).toContain("this browser");
    expect((await here.post("/account", { intent: "end-session", session: handles[0] })).status).toBe(302);
    const alive = await Promise.all([laptop, pipeline].map(async (x) => (await x.get("/account")).status));
    expect(alive.sort()).toEqual([200, 302]);
    expect((await here.post("/account", { intent: "end-session", session: handles[0] })).status).toBe(400);
    expect((await here.post("/account", { intent: "end-other-sessions" })).status).toBe(302);
    expect((await laptop.get("/account")).status).toBe(302);
    expect((await pipeline.get("/account")).status).toBe(302);
    expect((await here.get("/account")).status).toBe(200);
    // Another person's handle ends nothing.
    const [mei] = await t.db.select().from(users).where(eq(users.email, MEI));
    const other = await HttpClient.signedIn(app.url, mei.id);
    const hannaPage = await (await here.get("/account")).text();
    const own = /data-current="yes"/.test(hannaPage);
    expect(own).toBe(true);
    const meiHandles = [...(await (await other.get("/account")).text()).matchAll(/name="session" value="([0-9a-f]{24})"/g)].map((m) => m[1]);
    for (const h of meiHandles) expect((await here.post("/account", { intent: "end-session", session: h })).status).toBe(400);
  });

  it("ends a person's sessions at once when they are deactivated or their role changes", async () => {
    const [admin] = await t.db.select().from(users).where(eq(users.role, "admin"));
    const adminClient = await HttpClient.signedIn(app.url, admin.id);
    const [priya] = await t.db.select().from(users).where(eq(users.email, PRIYA));
    const priyaClient = await HttpClient.signedIn(app.url, priya.id);
    expect((await priyaClient.get("/account")).status).toBe(200);
    const version = async () => (await t.db.select().from(users).where(eq(users.id, priya.id)))[0].version;
    expect((await adminClient.post("/admin/users", { intent: "role", userId: String(priya.id), version: String(await version()), role: "contributor" })).status).toBe(302);
    expect((await priyaClient.get("/account")).status).toBe(302);
    const again = await HttpClient.signedIn(app.url, priya.id);
    expect((await again.get("/account")).status).toBe(200);
    expect((await adminClient.post("/admin/users", { intent: "deactivate", userId: String(priya.id), version: String(await version()) })).status).toBe(302);
    expect((await again.get("/account")).status).toBe(302);
    expect(await t.db.select().from(sessions).where(eq(sessions.userId, priya.id))).toEqual([]);
    await t.db.update(users).set({ active: true, role: "reader" }).where(eq(users.id, priya.id));
  });

  it("refuses an expired session, and the housekeeping of the app's start removes expired sessions only", async () => {
    const [hanna] = await t.db.select().from(users).where(eq(users.email, HANNA));
    const live = await HttpClient.signedIn(app.url, hanna.id);
    const stale = await HttpClient.signedIn(app.url, hanna.id);
    const staleDigest = createHash("sha256").update(JSON.parse(Buffer.from(decodeURIComponent(stale.cookies.get("__bandledger")!).split(".")[0], "base64").toString("utf8"))).digest("hex");
    await t.db.update(sessions).set({ expiresAt: sql`NOW(3) - INTERVAL 1 MINUTE` }).where(eq(sessions.id, staleDigest));
    expect((await stale.get("/account")).status).toBe(302);
    expect((await live.get("/account")).status).toBe(200);
    const second = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, workers: 1 });
    try {
      await waitFor(async () => (await t.db.select().from(sessions).where(eq(sessions.id, staleDigest))).length === 0 || null, { timeoutMs: 30_000, what: "the expired session removed at start" });
    } finally {
      await second.stop();
    }
    expect((await t.db.select().from(sessions).where(sql`${sessions.expiresAt} < NOW(3)`))).toEqual([]);
    expect((await live.get("/account")).status).toBe(200);
  });

  it("lets React Router refuse a foreign Origin on UI actions: no code is sent and no name changes", async () => {
    const evil = client();
    const r = await evil.post("/sign-in", { email: "csrf.victim@kestrel-devices.test", returnTo: "/" }, { origin: "http://evil.example" });
    expect(r.status).toBe(400);
    expect(await t.db.select().from(signInRequests).where(eq(signInRequests.email, "csrf.victim@kestrel-devices.test"))).toEqual([]);

    const [tomas] = await t.db.select().from(users).where(eq(users.email, TOMAS));
    const c = await HttpClient.signedIn(app.url, tomas.id);
    const change = await c.post("/account", { intent: "profile", name: "Renamed by a foreign page", notifyMode: "digest" }, { origin: "http://evil.example" });
    expect(change.status).toBe(400);
    const [after] = await t.db.select().from(users).where(eq(users.id, tomas.id));
    expect(after.name).toBe("Tomás Okafor");
  });
});

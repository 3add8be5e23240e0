import { createHash, randomBytes } from "node:crypto";
import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiTokens, auditLog, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { loadTeam } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { HttpClient } from "../support/route-access";

let t: TestDatabase;
let sink: Sink;
let app: AppServer;
const ids: Record<string, number> = {};

beforeAll(async () => {
  t = await freshDatabase("authtokens");
  await loadTeam(t.db);
  for (const u of await t.db.select().from(users)) ids[u.email.split(".")[0]] = u.id;
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-tok-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir });
});
afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await t?.drop();
});

async function createToken(c: HttpClient, name: string): Promise<string> {
  const r = await c.post("/account", { intent: "create-token", tokenName: name });
  expect(r.status).toBe(200);
  const token = /value="(blt_[A-Za-z0-9_-]{43})"/.exec(await r.text())?.[1];
  if (!token) throw new Error("no token on the page");
  return token;
}

const account = (token?: string, headers: Record<string, string> = {}) =>
  fetch(`${app.url}/api/v1/account`, { headers: { ...(token ? { authorization: `Bearer ${token}` } : {}), ...headers } });

describe("personal API tokens", () => {
  it("are shown once, stored only as a SHA-256 hash, and identify their owner to the API", async () => {
    const priya = await HttpClient.signedIn(app.url, ids.priya);
    const token = await createToken(priya, "band-alignment pipeline");
    const again = await (await priya.get("/account")).text();
    expect(again).not.toContain(token);
    expect(again).toContain("band-alignment pipeline");
    expect(again).toContain(token.slice(0, 12));

    const [row] = await t.db.select().from(apiTokens).where(eq(apiTokens.userId, ids.priya));
    expect(row.tokenHash).toBe(createHash("sha256").update(token).digest("hex"));
    expect(Object.values(row).some((v) => typeof v === "string" && v.includes(token.slice(12)))).toBe(false);
    expect(row.lastUsedAt).toBeNull();

    const r = await account(token);
    expect(r.status).toBe(200);
    expect(await r.json()).toMatchObject({ user: { id: ids.priya, email: "priya.raman@kestrel-devices.test", role: "reader" } });
    const [used] = await t.db.select().from(apiTokens).where(eq(apiTokens.id, row.id));
    expect(used.lastUsedAt).toBeInstanceOf(Date);

    const audits = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "token.created"), eq(auditLog.actorId, ids.priya)));
    expect(audits[0].detail).toMatchObject({ name: "band-alignment pipeline", prefix: token.slice(0, 12) });
  });

  it("answer 401 with our JSON error when the token is missing, malformed or unknown", async () => {
    for (const r of [await account(), await account(undefined, { authorization: "Basic abc" }), await account("blt_short"), await account(`blt_${randomBytes(32).toString("base64url")}`)]) {
      expect(r.status).toBe(401);
      expect(r.headers.get("www-authenticate")).toMatch(/^Bearer/);
      const body = await r.json();
      expect(body).toEqual({ error: { code: "unauthorized", message: expect.any(String), field: null } });
    }
  });

  it("stop working once revoked, and only their owner can revoke them", async () => {
    const tomas = await HttpClient.signedIn(app.url, ids.tomas);
    const token = await createToken(tomas, "to revoke");
    const [row] = await t.db.select().from(apiTokens).where(eq(apiTokens.userId, ids.tomas));

    const mei = await HttpClient.signedIn(app.url, ids.mei);
    const foreign = await mei.post("/account", { intent: "revoke-token", tokenId: String(row.id) });
    expect(foreign.status).toBe(400);
    expect((await account(token)).status).toBe(200);

    const revoked = await tomas.post("/account", { intent: "revoke-token", tokenId: String(row.id) });
    expect(revoked.status).toBe(302);
    expect((await account(token)).status).toBe(401);
    expect(await t.db.select().from(auditLog).where(and(eq(auditLog.action, "token.revoked"), eq(auditLog.targetId, String(row.id))))).toHaveLength(1);
  });

  it("stop working when their owner is deactivated", async () => {
    const hanna = await HttpClient.signedIn(app.url, ids.hanna);
    const token = await createToken(hanna, "nitride runs");
    expect((await account(token)).status).toBe(200);
    await t.db.update(users).set({ active: false }).where(eq(users.id, ids.hanna));
    expect((await account(token)).status).toBe(401);
    await t.db.update(users).set({ active: true }).where(eq(users.id, ids.hanna));
  });

  it("need a name, refused at the field", async () => {
    const ravi = await HttpClient.signedIn(app.url, ids.ravi);
    const r = await ravi.post("/account", { intent: "create-token", tokenName: "   " });
    expect(r.status).toBe(400);
    expect(await r.text()).toContain("Give the token a name");
    expect(await t.db.select().from(apiTokens).where(eq(apiTokens.userId, ids.ravi))).toEqual([]);
  });

  it("are not needed by the signed-in browser: the API also accepts the session", async () => {
    const ravi = await HttpClient.signedIn(app.url, ids.ravi);
    const r = await ravi.get("/api/v1/account");
    expect(r.status).toBe(200);
    expect(await r.json()).toMatchObject({ user: { role: "lead", email: "ravi.menon@kestrel-devices.test" } });
  });
});

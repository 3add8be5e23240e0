import { mkdtempSync, readdirSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLog, familyLeads, materialFamilies, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { loadTeam } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { readLastMail } from "../support/mailbox";
import { HttpClient } from "../support/route-access";

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let app: AppServer;
let admin: HttpClient;
const ids: Record<string, number> = {};

async function user(id: number) {
  const [row] = await t.db.select().from(users).where(eq(users.id, id));
  return row;
}

beforeAll(async () => {
  t = await freshDatabase("authadmin");
  await loadTeam(t.db);
  for (const u of await t.db.select().from(users)) ids[u.email.split(".")[0]] = u.id;
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-admin-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir });
  admin = await HttpClient.signedIn(app.url, ids.ines);
});
afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await t?.drop();
});

describe("inviting people", () => {
  it("creates the account, mails an invitation with a sign-in link, and writes the audit row", async () => {
    const after = Date.now();
    const r = await admin.post("/admin/users", { intent: "invite", email: " New.Person@Kestrel-Devices.test ", name: "Noor Haddad", role: "contributor" });
    expect(r.status).toBe(302);
    const [row] = await t.db.select().from(users).where(eq(users.email, "new.person@kestrel-devices.test"));
    expect(row).toMatchObject({ name: "Noor Haddad", role: "contributor", active: true, invitedBy: ids.ines });
    const mail = await readLastMail(mailboxDir, "new.person@kestrel-devices.test", { after });
    expect(mail.subject).toBe("Inês Carvalho invited you to Bandledger");
    expect(mail.text).toContain(`${app.url}/sign-in?email=new.person%40kestrel-devices.test`);
    expect(mail.html).toContain("contributor role");
    const [audit] = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "user.invited"), eq(auditLog.targetId, String(row.id))));
    expect(audit).toMatchObject({ actorId: ids.ines, ip: "127.0.0.1", detail: { email: "new.person@kestrel-devices.test", role: "contributor" } });
    expect(await (await admin.get("/admin/users")).text()).toContain("Noor Haddad");
  });

  it("refuses a taken, malformed or nameless invitation at its field, keeping what was typed", async () => {
    const taken = await admin.post("/admin/users", { intent: "invite", email: "ravi.menon@kestrel-devices.test", name: "Ravi again", role: "reader" });
    expect(taken.status).toBe(400);
    const takenHtml = await taken.text();
    expect(takenHtml).toContain("This address already has an account.");
    expect(takenHtml).toContain('value="Ravi again"');
    const inactive = await admin.post("/admin/users", { intent: "invite", email: "jonas.weber@kestrel-devices.test", name: "Jonas", role: "reader" });
    expect(await inactive.text()).toContain("deactivated account; reactivate it");
    const malformed = await admin.post("/admin/users", { intent: "invite", email: "not-an-address", name: "X", role: "reader" });
    expect(await malformed.text()).toContain("Enter an e-mail address such as name@example.com.");
    const nameless = await admin.post("/admin/users", { intent: "invite", email: "someone@kestrel-devices.test", name: " ", role: "wizard" });
    const namelessHtml = await nameless.text();
    expect(namelessHtml).toContain("Enter the person&#x27;s name.");
    expect(namelessHtml).toContain("Choose one of the four roles.");
    expect(await t.db.select().from(users).where(eq(users.email, "someone@kestrel-devices.test"))).toEqual([]);
  });

  it("is refused to anyone but an admin, whatever the page shows", async () => {
    const lead = await HttpClient.signedIn(app.url, ids.ravi);
    const r = await lead.post("/admin/users", { intent: "invite", email: "sneaky@kestrel-devices.test", name: "Sneaky", role: "admin" });
    expect(r.status).toBe(403);
    expect(await r.text()).toContain("Your role does not open this page");
    expect(await t.db.select().from(users).where(eq(users.email, "sneaky@kestrel-devices.test"))).toEqual([]);
  });
});

describe("roles and deactivation", () => {
  it("changes a role with an audit row, and refuses a change based on an outdated list", async () => {
    const priya = await user(ids.priya);
    const r = await admin.post("/admin/users", { intent: "role", userId: String(priya.id), version: String(priya.version), role: "contributor" });
    expect(r.status).toBe(302);
    expect((await user(ids.priya)).role).toBe("contributor");
    const [row] = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "user.role_changed"), eq(auditLog.targetId, String(ids.priya))));
    expect(row.detail).toMatchObject({ from: "reader", to: "contributor" });
    const stale = await admin.post("/admin/users", { intent: "role", userId: String(priya.id), version: String(priya.version), role: "lead" });
    expect(stale.status).toBe(400);
    expect(await stale.text()).toContain("Someone changed this person meanwhile");
    expect((await user(ids.priya)).role).toBe("contributor");
  });

  it("removes a lead's family assignments when the lead role goes", async () => {
    const ravi = await user(ids.ravi);
    expect(await t.db.select().from(familyLeads).where(eq(familyLeads.userId, ravi.id))).toHaveLength(2);
    await admin.post("/admin/users", { intent: "role", userId: String(ravi.id), version: String(ravi.version), role: "contributor" });
    expect(await t.db.select().from(familyLeads).where(eq(familyLeads.userId, ravi.id))).toEqual([]);
    const [row] = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "user.role_changed"), eq(auditLog.targetId, String(ravi.id))));
    expect((row.detail as { leadFamiliesRemoved: number[] }).leadFamiliesRemoved).toHaveLength(2);
  });

  it("removes the assignments on the way lead → admin → contributor too, and never lets a stale one count", async () => {
    const [{ id }] = await t.db.insert(users).values({ email: "lale.demir@kestrel-devices.test", name: "Lale Demir", role: "lead" }).$returningId();
    const families = await t.db.select().from(materialFamilies).limit(2);
    await t.db.insert(familyLeads).values(families.map((f) => ({ userId: id, familyId: f.id })));
    expect((await admin.post("/admin/users", { intent: "role", userId: String(id), version: String((await user(id)).version), role: "admin" })).status).toBe(302);
    expect(await t.db.select().from(familyLeads).where(eq(familyLeads.userId, id))).toEqual([]);
    expect((await admin.post("/admin/users", { intent: "role", userId: String(id), version: String((await user(id)).version), role: "contributor" })).status).toBe(302);
    expect((await user(id)).role).toBe("contributor");
    // An assignment left behind by hand (or by an older version) gives a contributor no lead's rights.
    await t.db.insert(familyLeads).values({ userId: id, familyId: families[0].id });
    const lale = await HttpClient.signedIn(app.url, id);
    const account = (await (await lale.get("/api/v1/account")).json()) as { user: { role: string; leadFamilyIds: number[] } };
    expect(account.user).toMatchObject({ role: "contributor", leadFamilyIds: [] });
    expect((await lale.get("/review")).status).toBe(403);
    await t.db.delete(familyLeads).where(eq(familyLeads.userId, id));
  });

  it("never leaves the team without an active admin", async () => {
    const ines = await user(ids.ines);
    const demote = await admin.post("/admin/users", { intent: "role", userId: String(ines.id), version: String(ines.version), role: "lead" });
    expect(demote.status).toBe(400);
    expect(await demote.text()).toContain("This is the last active admin.");
    const deactivate = await admin.post("/admin/users", { intent: "deactivate", userId: String(ines.id), version: String(ines.version) });
    expect(deactivate.status).toBe(400);
    expect(await user(ids.ines)).toMatchObject({ role: "admin", active: true });

    const tomas = await user(ids.tomas);
    await admin.post("/admin/users", { intent: "role", userId: String(tomas.id), version: String(tomas.version), role: "admin" });
    const tomasNow = await user(ids.tomas);
    expect(tomasNow.role).toBe("admin");
    const tomasClient = await HttpClient.signedIn(app.url, ids.tomas);
    const self = await tomasClient.post("/admin/users", { intent: "role", userId: String(tomasNow.id), version: String(tomasNow.version), role: "contributor" });
    expect(self.status).toBe(302);
    expect((await user(ids.tomas)).role).toBe("contributor");
  });

  it("deactivation ends the person's access and sessions at once; after reactivation they sign in anew", async () => {
    const mei = await HttpClient.signedIn(app.url, ids.mei);
    expect((await mei.get("/account")).status).toBe(200);
    const row = await user(ids.mei);
    expect((await admin.post("/admin/users", { intent: "deactivate", userId: String(row.id), version: String(row.version) })).status).toBe(302);
    expect((await mei.get("/account")).headers.get("location")).toBe("/sign-in?returnTo=%2Faccount");
    const again = await user(ids.mei);
    expect((await admin.post("/admin/users", { intent: "reactivate", userId: String(again.id), version: String(again.version) })).status).toBe(302);
    // The session deactivation ended stays ended (it is gone from the server); a new sign-in works.
    expect((await mei.get("/account")).status).toBe(302);
    expect((await (await HttpClient.signedIn(app.url, ids.mei)).get("/account")).status).toBe(200);
    const actions = (await t.db.select().from(auditLog).where(eq(auditLog.targetId, String(ids.mei)))).map((r) => r.action);
    expect(actions).toEqual(expect.arrayContaining(["user.deactivated", "user.reactivated"]));
  });
});

describe("material families and lead assignments", () => {
  it("creates a family with a valid, unused key and renames it", async () => {
    const bad = await admin.post("/admin/families", { intent: "create", key: "Bad Key!", name: "Bad" });
    expect(bad.status).toBe(400);
    expect(await bad.text()).toContain("Use lower-case letters, digits and single hyphens");
    const dup = await admin.post("/admin/families", { intent: "create", key: "arsenides", name: "Arsenides again" });
    expect(await dup.text()).toContain("A family with this key exists already.");
    const ok = await admin.post("/admin/families", { intent: "create", key: "oxides", name: "Oxides", description: "ZnO and Ga2O3" });
    expect(ok.status).toBe(302);
    const [fam] = await t.db.select().from(materialFamilies).where(eq(materialFamilies.key, "oxides"));
    expect(fam.description).toBe("ZnO and Ga2O3");
    const empty = await admin.post("/admin/families", { intent: "rename", familyId: String(fam.id), name: "" });
    expect(await empty.text()).toContain("Enter the family&#x27;s name.");
    await admin.post("/admin/families", { intent: "rename", familyId: String(fam.id), name: "Oxide semiconductors" });
    const [renamed] = await t.db.select().from(materialFamilies).where(eq(materialFamilies.id, fam.id));
    expect(renamed).toMatchObject({ key: "oxides", name: "Oxide semiconductors" });
    const audits = (await t.db.select().from(auditLog).where(eq(auditLog.targetType, "material_family"))).map((r) => r.action);
    expect(audits).toEqual(expect.arrayContaining(["family.created", "family.renamed"]));
  });

  it("assigns only people with the lead role, once, and unassigns them", async () => {
    const [antimonides] = await t.db.select().from(materialFamilies).where(eq(materialFamilies.key, "antimonides"));
    const notLead = await admin.post("/admin/leads", { intent: "assign", userId: String(ids.mei), familyId: String(antimonides.id) });
    expect(notLead.status).toBe(400);
    expect(await notLead.text()).toContain("Only an active person with the lead role");
    const none = await admin.post("/admin/leads", { intent: "assign", userId: "", familyId: "" });
    expect(await none.text()).toContain("Choose a lead.");

    expect((await admin.post("/admin/leads", { intent: "assign", userId: String(ids.hanna), familyId: String(antimonides.id) })).status).toBe(302);
    const twice = await admin.post("/admin/leads", { intent: "assign", userId: String(ids.hanna), familyId: String(antimonides.id) });
    expect(await twice.text()).toContain("already leads");
    const hanna = await HttpClient.signedIn(app.url, ids.hanna);
    // Exactly the families family_leads holds for her, in id order: not another person's, not a constant.
    const held = (await t.db.select({ f: familyLeads.familyId }).from(familyLeads).where(eq(familyLeads.userId, ids.hanna))).map((r) => r.f).sort((a, b) => a - b);
    expect(held.length).toBeGreaterThan(1);
    expect((await (await hanna.get("/api/v1/account")).json()).user.leadFamilyIds).toEqual(held);

    expect((await admin.post("/admin/leads", { intent: "unassign", userId: String(ids.hanna), familyId: String(antimonides.id) })).status).toBe(302);
    expect(await t.db.select().from(familyLeads).where(and(eq(familyLeads.userId, ids.hanna), eq(familyLeads.familyId, antimonides.id)))).toEqual([]);
    const actions = (await t.db.select().from(auditLog).where(eq(auditLog.targetId, String(antimonides.id)))).map((r) => r.action);
    expect(actions).toEqual(expect.arrayContaining(["lead.assigned", "lead.unassigned"]));
  });
});

describe("the audit page and the local mailbox", () => {
  it("filters the audit log by action and pages it", async () => {
    await t.db.insert(auditLog).values(Array.from({ length: 120 }, (_, i) => ({ action: "test.bulk", actorId: ids.ines, actorEmail: "x", detail: { i } })));
    const first = await (await admin.get("/admin/audit?action=test.bulk")).text();
    expect(first).toContain("120 entries match the filter · page 1 of 3");
    expect(first.match(/data-action="test.bulk"/g)).toHaveLength(50);
    expect(first).not.toContain('data-action="user.invited"');
    const last = await (await admin.get("/admin/audit?action=test.bulk&page=3")).text();
    expect(last.match(/data-action="test.bulk"/g)).toHaveLength(20);
    const invited = await (await admin.get("/admin/audit?action=user.invited")).text();
    expect(invited.match(/data-action="user.invited"/g)).toHaveLength(1);
    const future = await (await admin.get("/admin/audit?from=2999-01-01")).text();
    expect(future).toContain("No entries match the filter");
    const wrong = await (await admin.get("/admin/audit?from=2025-13-45&to=2025-01-01")).text();
    expect(wrong).toContain("That is not a calendar date.");
  });

  it("shows entries written under the old words (proposal.rebase, set.watched) under today's names, and filters them so", async () => {
    await t.db.insert(auditLog).values([
      { action: "proposal.rebase", actorId: ids.ines, actorEmail: "x", targetType: "proposal", targetId: "77" },
      { action: "set.watched", actorId: ids.ines, actorEmail: "x" },
    ]);
    const page = (await (await admin.get("/admin/audit?action=proposal.carry_forward")).text()).replace(/<!-- -->/g, "");
    expect(page).toContain("1 entry matches the filter");
    expect(page).toContain('data-action="proposal.carry_forward"');
    expect(page).toMatch(/<option value="proposal.carry_forward"( selected="")?>proposal.carry_forward<\/option>/);
    expect(page).toContain('<option value="set.notices_on">set.notices_on</option>');
    expect(page).not.toMatch(/rebase|watched/);
  });

  it("lists and shows the mails sent, and only files from the sink", async () => {
    const list = await (await admin.get("/dev/mailbox")).text();
    expect(list).toContain("Inês Carvalho invited you to Bandledger");
    const file = readdirSync(mailboxDir).find((f) => f.endsWith(".eml"))!;
    const page = await (await admin.get(`/dev/mailbox/${file}`)).text();
    expect(page).toContain('sandbox=""');
    expect(page).toContain("srcDoc=");
    expect(page).toContain("There is no password");
    expect((await admin.get("/dev/mailbox/..%2F..%2Fdb-password")).status).toBe(404);
    expect((await admin.get("/dev/mailbox/missing.eml")).status).toBe(404);
  });
});

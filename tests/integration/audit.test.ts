import { eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLog } from "~/.server/db/schema";
import { databaseRefusal, freshDatabase, type TestDatabase } from "../support/db";

let t: TestDatabase;
let audit: typeof import("~/.server/audit");
let peer: typeof import("~/.server/auth/client-address");

beforeAll(async () => {
  t = await freshDatabase("audit");
  // The service reads its database and proxy setting from the environment, once.
  process.env.DATABASE_URL = t.url;
  process.env.SESSION_SECRET = "audit-test-session-secret-0123456789abcdef";
  process.env.TRUST_PROXY = "10.0.0.1";
  audit = await import("~/.server/audit");
  peer = await import("~/.server/auth/client-address");
});
afterAll(async () => {
  const { closeDb } = await import("~/.server/db/client");
  await closeDb();
  await t?.drop();
});

describe("audit()", () => {
  it("writes who, what, about what, from which address and when", async () => {
    const request = new Request("http://bandledger.test/admin/users", { headers: { "x-forwarded-for": "192.0.2.10" } });
    const before = Date.now();
    // As served through the listed proxy 10.0.0.1, which appended the client's address.
    await peer.runWithPeerAddress("10.0.0.1", () => audit.audit({ id: 7, email: "ines@example.test" }, "user.invited", { type: "user", id: 42 }, request, { role: "reader" }));
    const [row] = await t.db.select().from(auditLog).where(eq(auditLog.action, "user.invited"));
    expect(row).toMatchObject({ actorId: 7, actorEmail: "ines@example.test", targetType: "user", targetId: "42", ip: "192.0.2.10", detail: { role: "reader" } });
    expect(Math.abs(row.at.getTime() - before)).toBeLessThan(5_000);
  });

  it("records the system as actor when there is none, and no address without a request", async () => {
    await audit.audit(null, "mail.failed", null, null);
    const [row] = await t.db.select().from(auditLog).where(eq(auditLog.action, "mail.failed"));
    expect(row).toMatchObject({ actorId: null, actorEmail: null, targetType: null, ip: null, detail: null });
  });
});

describe("the audit table is append-only in the database", () => {
  it("refuses UPDATE, DELETE and REPLACE of an entry, whoever sends them", async () => {
    await audit.audit({ id: 1, email: "a@example.test" }, "auth.sign_in", { type: "user", id: 1 }, null);
    const [row] = await t.db.select().from(auditLog).where(eq(auditLog.action, "auth.sign_in"));
    // The app's own account has no right to change or remove a row; the schema's owner is stopped by the triggers.
    expect(await databaseRefusal(t.db.update(auditLog).set({ action: "auth.sign_out" }).where(eq(auditLog.id, row.id)))).toMatch(/UPDATE command denied/);
    expect(await databaseRefusal(t.db.delete(auditLog).where(eq(auditLog.id, row.id)))).toMatch(/DELETE command denied/);
    expect(await databaseRefusal(t.pool.query("REPLACE INTO audit_log (id, action) VALUES (?, 'forged')", [row.id]))).toMatch(/DELETE command denied/);
    expect(await databaseRefusal(t.admin.db.update(auditLog).set({ action: "auth.sign_out" }).where(eq(auditLog.id, row.id)))).toMatch(/append-only/);
    expect(await databaseRefusal(t.admin.db.delete(auditLog).where(eq(auditLog.id, row.id)))).toMatch(/append-only/);
    expect(await databaseRefusal(t.admin.pool.query("REPLACE INTO audit_log (id, action) VALUES (?, 'forged')", [row.id]))).toMatch(/append-only/);
    const [still] = await t.db.select().from(auditLog).where(eq(auditLog.id, row.id));
    expect(still.action).toBe("auth.sign_in");
  });
});

describe("listAudit", () => {
  beforeAll(async () => {
    const rows = [];
    for (let i = 0; i < 30; i++) {
      rows.push({ at: new Date(Date.UTC(2025, 0, 1 + i, 12)), action: i % 3 === 0 ? "lead.assigned" : "auth.sign_in", actorId: 100 + (i % 2), actorEmail: `p${i % 2}@example.test` });
    }
    await t.db.insert(auditLog).values(rows);
  });

  it("filters by action, actor and a date range with an inclusive start and exclusive end, newest first", async () => {
    const r = await audit.listAudit({ action: "lead.assigned", actorId: 100, from: new Date(Date.UTC(2025, 0, 1)), to: new Date(Date.UTC(2025, 0, 31)), page: 1, pageSize: 50 });
    // Days 1..30 of January with i = 0, 6, 12, 18, 24 satisfy i % 3 == 0 and i % 2 == 0.
    expect(r.rows.map((x) => x.at.toISOString().slice(0, 10))).toEqual(["2025-01-25", "2025-01-19", "2025-01-13", "2025-01-07", "2025-01-01"]);
    expect(r.total).toBe(5);
  });

  it("pages in SQL and clamps a page number past the end", async () => {
    const all = { from: new Date(Date.UTC(2025, 0, 1)), to: new Date(Date.UTC(2025, 1, 1)), pageSize: 8 };
    const p1 = await audit.listAudit({ ...all, page: 1 });
    const p4 = await audit.listAudit({ ...all, page: 4 });
    const p9 = await audit.listAudit({ ...all, page: 9 });
    expect(p1).toMatchObject({ total: 30, pageCount: 4 });
    expect(p1.rows).toHaveLength(8);
    expect(p4.rows).toHaveLength(6);
    expect(p9.page).toBe(4);
    expect(p1.rows[0].at.getTime()).toBeGreaterThan(p4.rows[0].at.getTime());
    const [{ n }] = await t.db.select({ n: sql<number>`count(*)` }).from(auditLog);
    expect(Number(n)).toBeGreaterThanOrEqual(30);
  });

  it("lists the actions that occur, for the filter", async () => {
    expect(await audit.auditActions()).toEqual(expect.arrayContaining(["auth.sign_in", "lead.assigned", "mail.failed", "user.invited"]));
  });
});

describe("actions written under borrowed words before our own", () => {
  it("shows and filters rows written as proposal.rebase, proposal.comment and set.watched/unwatched under today's names", async () => {
    const day = (d: number) => new Date(Date.UTC(2024, 5, d, 12));
    await t.db.insert(auditLog).values([
      { at: day(1), action: "proposal.rebase", actorId: 300, targetType: "proposal", targetId: "9" },
      { at: day(2), action: "proposal.carry_forward", actorId: 300, targetType: "proposal", targetId: "9" },
      { at: day(3), action: "set.watched", actorId: 300 },
      { at: day(4), action: "set.unwatched", actorId: 300 },
      { at: day(5), action: "proposal.comment", actorId: 300 },
    ]);
    const june = { actorId: 300, from: day(1), to: day(30), page: 1, pageSize: 50 };
    const all = await audit.listAudit(june);
    expect(all.rows.map((r) => r.action)).toEqual(["proposal.remark", "set.notices_off", "set.notices_on", "proposal.carry_forward", "proposal.carry_forward"]);
    // Filtering by today's name finds the old rows too; the old name is read as the new one.
    expect((await audit.listAudit({ ...june, action: "proposal.carry_forward" })).total).toBe(2);
    expect((await audit.listAudit({ ...june, action: "proposal.rebase" })).total).toBe(2);
    expect((await audit.listAudit({ ...june, action: "set.notices_on" })).rows.map((r) => r.at.toISOString().slice(0, 10))).toEqual(["2024-06-03"]);
    const actions = await audit.auditActions();
    expect(actions).toEqual(expect.arrayContaining(["proposal.carry_forward", "proposal.remark", "set.notices_on", "set.notices_off"]));
    for (const old of ["proposal.rebase", "proposal.comment", "set.watched", "set.unwatched"]) expect(actions).not.toContain(old);
    // The log itself is left as written.
    expect((await t.db.select().from(auditLog).where(eq(auditLog.action, "proposal.rebase"))).length).toBe(1);
  });
});

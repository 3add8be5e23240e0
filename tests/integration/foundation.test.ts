import { eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLog, materialFamilies } from "~/.server/db/schema";
import { databaseRefusal, freshDatabase, type TestDatabase } from "../support/db";

let t: TestDatabase;
beforeAll(async () => {
  t = await freshDatabase("foundation");
});
afterAll(async () => t?.drop());

describe("migrations on an empty MariaDB database", () => {
  it("create every table of the schema", async () => {
    const [rows] = await t.pool.query("SELECT table_name AS name FROM information_schema.tables WHERE table_schema = ?", [t.name]);
    const names = (rows as { name: string }[]).map((r) => r.name);
    for (const table of ["users", "material_families", "family_leads", "audit_log", "materials", "quantities", "records", "revisions", "sources", "proposals", "releases", "release_items"]) {
      expect(names).toContain(table);
    }
  });

  it("read and write through Drizzle", async () => {
    await t.db.insert(materialFamilies).values({ key: "test-family", name: "Test family" });
    const [row] = await t.db.select().from(materialFamilies).where(eq(materialFamilies.key, "test-family"));
    expect(row.name).toBe("Test family");
    expect(row.createdAt).toBeInstanceOf(Date);
  });

  it("are recorded, so running them again changes nothing", async () => {
    const { runMigrations } = await import("~/.server/db/migrate");
    const [before] = await t.pool.query("SELECT COUNT(*) AS n FROM __drizzle_migrations");
    await runMigrations(t.url);
    const [after] = await t.pool.query("SELECT COUNT(*) AS n FROM __drizzle_migrations");
    expect(after).toEqual(before);
  });

  it("install the append-only triggers", async () => {
    await t.db.insert(auditLog).values({ action: "test.event" });
    expect(await databaseRefusal(t.db.update(auditLog).set({ action: "tampered" }))).toMatch(/append-only/);
    expect(await databaseRefusal(t.db.delete(auditLog))).toMatch(/append-only/);
    const [{ n }] = await t.db.select({ n: sql<number>`count(*)` }).from(auditLog).where(eq(auditLog.action, "test.event"));
    expect(Number(n)).toBe(1);
  });
});

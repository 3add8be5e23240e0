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
    await runMigrations(t.adminUrl, { user: new URL(t.url).username, host: "127.0.0.1" });
    const [after] = await t.pool.query("SELECT COUNT(*) AS n FROM __drizzle_migrations");
    expect(after).toEqual(before);
  });

  it("install the append-only triggers", async () => {
    await t.db.insert(auditLog).values({ action: "test.event" });
    expect(await databaseRefusal(t.admin.db.update(auditLog).set({ action: "tampered" }))).toMatch(/append-only/);
    expect(await databaseRefusal(t.admin.db.delete(auditLog))).toMatch(/append-only/);
    const [{ n }] = await t.db.select({ n: sql<number>`count(*)` }).from(auditLog).where(eq(auditLog.action, "test.event"));
    expect(Number(n)).toBe(1);
  });
});

describe("database accounts", () => {
  it("give the app's runtime account rows only: it can neither drop nor change a trigger, truncate, nor alter a table", async () => {
    for (const statement of [
      "DROP TRIGGER audit_log_no_delete",
      "DROP TRIGGER revisions_no_update",
      "CREATE OR REPLACE TRIGGER releases_no_delete BEFORE DELETE ON releases FOR EACH ROW SET @x = 1",
      "TRUNCATE TABLE audit_log",
      "TRUNCATE TABLE revisions",
      "TRUNCATE TABLE release_items",
      "DROP TABLE audit_log",
      "ALTER TABLE audit_log ADD COLUMN forged INT",
      "CREATE TABLE forged (id INT PRIMARY KEY)",
    ]) {
      expect(await databaseRefusal(t.pool.query(statement)), statement).toMatch(/denied/);
    }
    const [triggers] = await t.admin.pool.query("SELECT trigger_name AS name FROM information_schema.triggers WHERE trigger_schema = ?", [t.name]);
    expect((triggers as { name: string }[]).map((r) => r.name)).toEqual(expect.arrayContaining(["audit_log_no_delete", "revisions_no_update", "releases_no_delete"]));
    // Rows of ordinary tables stay writable.
    await t.db.insert(materialFamilies).values({ key: "rights-check", name: "Rights check" });
    await t.db.update(materialFamilies).set({ name: "Rights checked" }).where(eq(materialFamilies.key, "rights-check"));
    await t.db.delete(materialFamilies).where(eq(materialFamilies.key, "rights-check"));
    const [grants] = await t.pool.query("SHOW GRANTS FOR CURRENT_USER()");
    const text = (grants as Record<string, string>[]).map((g) => Object.values(g)[0]).join("\n");
    expect(text).not.toMatch(/SUPER|ALL PRIVILEGES|TRIGGER|DROP/);
  });

  it.skipIf(Boolean(process.env.TEST_DATABASE_URL))("never let root in over TCP without a password on the embedded server", async () => {
    const { port } = new URL(t.url);
    const mysql = await import("mysql2/promise");
    const refusal = await mysql.createConnection({ host: "127.0.0.1", port: Number(port), user: "root", password: "" }).then(
      async (c) => {
        await c.end();
        return "connected";
      },
      (e: Error) => e.message,
    );
    expect(refusal).toMatch(/Access denied/);
  });
});

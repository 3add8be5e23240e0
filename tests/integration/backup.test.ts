import { eq } from "drizzle-orm";
import { execFileSync } from "node:child_process";
import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLog, materialFamilies, users } from "~/.server/db/schema";
import { loadTeam } from "../../seed-data/load";
import { tableChecksums } from "../support/checksums";
import { databaseRefusal, freshDatabase, type TestDatabase } from "../support/db";

let t: TestDatabase;
beforeAll(async () => {
  t = await freshDatabase("backup");
  await loadTeam(t.db);
  await t.db.insert(auditLog).values({ action: "backup.test", detail: { note: "ünïcode Γ-valley ✓" } });
});
afterAll(async () => t?.drop());

describe("npm run db:backup and db:restore (mariadb-dump)", () => {
  it("round-trip every table to identical checksums and keep the append-only triggers", async () => {
    const before = await tableChecksums(t.pool, t.name);
    expect(Object.keys(before).length).toBeGreaterThan(10);
    const file = path.join(mkdtempSync(path.join(os.tmpdir(), "bl-backup-")), "dump.sql");
    const env = { ...process.env, DATABASE_URL: t.url, MIGRATION_DATABASE_URL: t.adminUrl };
    execFileSync("bash", ["scripts/backup.sh", "backup", file], { env, stdio: "pipe" });
    await t.db.insert(materialFamilies).values({ key: "after-backup", name: "Written after the backup" });
    await t.pool.end();
    execFileSync("bash", ["scripts/backup.sh", "restore", file], { env, stdio: "pipe" });
    const again = await freshPoolFor(t);
    const after = await tableChecksums(again.pool, t.name);
    expect(after).toEqual(before);
    const families = await again.db.select().from(materialFamilies);
    expect(families.map((f) => f.key)).not.toContain("after-backup");
    // The runtime account's row rights hold again on the re-created tables; the triggers stop even the schema's owner.
    expect(await databaseRefusal(again.db.delete(auditLog))).toMatch(/DELETE command denied/);
    await again.db.update(users).set({ name: "Renamed after the restore" }).where(eq(users.id, 1));
    expect(await databaseRefusal(t.admin.db.delete(auditLog))).toMatch(/append-only/);
    expect((await again.db.select().from(users)).length).toBeGreaterThan(3);
    await again.pool.end();
  });

  it("refuses to restore a file that does not exist", () => {
    const env = { ...process.env, DATABASE_URL: t.url, MIGRATION_DATABASE_URL: t.adminUrl };
    expect(() => execFileSync("bash", ["scripts/backup.sh", "restore", "/nonexistent/backup.sql"], { env, stdio: "pipe" })).toThrow();
  });
});

async function freshPoolFor(db: TestDatabase) {
  const { createPool } = await import("~/.server/db/client");
  const { drizzle } = await import("drizzle-orm/mysql2");
  const schema = await import("~/.server/db/schema");
  const pool = createPool(db.url, 4);
  return { pool, db: drizzle(pool, { schema, mode: "default" }) };
}

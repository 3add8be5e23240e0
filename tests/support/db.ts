import { randomBytes } from "node:crypto";
import { drizzle } from "drizzle-orm/mysql2";
import type mysql from "mysql2/promise";
import { createPool, type Db } from "~/.server/db/client";
import type { RuntimeAccount } from "~/.server/db/grants";
import { createDatabase, dropDatabase, runMigrations } from "~/.server/db/migrate";
import * as schema from "~/.server/db/schema";
import { baseDatabaseUrl, migrationBaseUrl } from "./env";

export type TestDatabase = {
  /** The runtime account's address of the database: what the app uses, and what tests read and write through. */
  url: string;
  /** The migration account's address: schema changes, and the rare test that must act as the schema's owner. */
  adminUrl: string;
  name: string;
  db: Db;
  pool: mysql.Pool;
  /** The same database through the migration account (the schema's owner). */
  admin: { db: Db; pool: mysql.Pool };
  drop: () => Promise<void>;
};

function withDatabase(url: string, name: string): string {
  const u = new URL(url);
  u.pathname = `/${name}`;
  return u.toString();
}

function runtimeAccountOf(url: string): RuntimeAccount {
  return { user: decodeURIComponent(new URL(url).username), host: process.env.TEST_DATABASE_ACCOUNT_HOST ?? "127.0.0.1" };
}

/** A database of its own: created and migrated by the migration account, with the runtime account's rights granted as in production. */
export async function createTestDatabase(name: string): Promise<{ url: string; adminUrl: string; drop: () => Promise<void> }> {
  const runtimeBase = process.env.BANDLEDGER_TEST_BASE_URL ?? baseDatabaseUrl();
  const adminBase = process.env.BANDLEDGER_TEST_MIGRATION_URL ?? migrationBaseUrl();
  const runtime = runtimeAccountOf(runtimeBase);
  const adminUrl = await createDatabase(adminBase, name);
  await runMigrations(adminUrl, runtime);
  return { url: withDatabase(runtimeBase, name), adminUrl, drop: () => dropDatabase(adminBase, name, runtime) };
}

// Each test file gets a database of its own, migrated from drizzle/, so files run in parallel.
export async function freshDatabase(label = "t"): Promise<TestDatabase> {
  const name = `bandledger_test_${label.replace(/[^a-z0-9]/gi, "").slice(0, 20)}_${randomBytes(4).toString("hex")}`;
  const created = await createTestDatabase(name);
  const pool = createPool(created.url, 10);
  const db = drizzle(pool, { schema, mode: "default" });
  const adminPool = createPool(created.adminUrl, 2);
  const admin = { pool: adminPool, db: drizzle(adminPool, { schema, mode: "default" }) };
  return {
    url: created.url, adminUrl: created.adminUrl, name, db, pool, admin,
    drop: async () => {
      await pool.end().catch(() => undefined);
      await adminPool.end().catch(() => undefined);
      await created.drop();
    },
  };
}

// Drizzle wraps the driver's error; the database's own message is in its cause.
export async function databaseRefusal(promise: Promise<unknown>): Promise<string> {
  try {
    await promise;
  } catch (e) {
    const cause = (e as { cause?: { message?: string } }).cause;
    return cause?.message ?? (e as Error).message;
  }
  throw new Error("the database accepted the statement");
}

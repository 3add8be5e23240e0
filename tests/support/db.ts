import { randomBytes } from "node:crypto";
import { drizzle } from "drizzle-orm/mysql2";
import type mysql from "mysql2/promise";
import { createPool, type Db } from "~/.server/db/client";
import { createDatabase, dropDatabase, runMigrations } from "~/.server/db/migrate";
import * as schema from "~/.server/db/schema";
import { baseDatabaseUrl } from "./env";

export type TestDatabase = { url: string; name: string; db: Db; pool: mysql.Pool; drop: () => Promise<void> };

// Each test file gets a database of its own, migrated from drizzle/, so files run in parallel.
export async function freshDatabase(label = "t"): Promise<TestDatabase> {
  const base = process.env.BANDLEDGER_TEST_BASE_URL ?? baseDatabaseUrl();
  const name = `bandledger_test_${label.replace(/[^a-z0-9]/gi, "").slice(0, 20)}_${randomBytes(4).toString("hex")}`;
  const url = await createDatabase(base, name);
  await runMigrations(url);
  const pool = createPool(url, 10);
  const db = drizzle(pool, { schema, mode: "default" });
  return {
    url, name, db, pool,
    drop: async () => {
      await pool.end().catch(() => undefined);
      await dropDatabase(base, name);
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

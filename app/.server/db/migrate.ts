import { drizzle } from "drizzle-orm/mysql2";
import { migrate } from "drizzle-orm/mysql2/migrator";
import mysql from "mysql2/promise";
import path from "node:path";
import { grantRuntimeRights, revokeRuntimeRights, type RuntimeAccount } from "./grants";

/**
 * Applies the migrations through the migration account, then gives the runtime account its row rights on every
 * table (when the two accounts differ; with one account for both, nothing is granted).
 */
export async function runMigrations(url: string, runtime?: RuntimeAccount): Promise<void> {
  const connection = await mysql.createConnection({ uri: url, multipleStatements: false });
  try {
    await migrate(drizzle(connection), { migrationsFolder: path.join(process.cwd(), "drizzle") });
    const migrator = decodeURIComponent(new URL(url).username);
    if (runtime && runtime.user !== migrator) await grantRuntimeRights(connection, new URL(url).pathname.slice(1), runtime);
  } finally {
    await connection.end();
  }
}

function serverUrl(baseUrl: string): string {
  const u = new URL(baseUrl);
  u.pathname = "/";
  return u.toString();
}

// A fresh database beside the configured one, for tests: created, migrated, and dropped by the caller.
export async function createDatabase(baseUrl: string, name: string): Promise<string> {
  if (!/^[A-Za-z0-9_]+$/.test(name)) throw new Error(`bad database name ${name}`);
  const connection = await mysql.createConnection({ uri: serverUrl(baseUrl) });
  try {
    await connection.query(`DROP DATABASE IF EXISTS \`${name}\``);
    await connection.query(`CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
  } finally {
    await connection.end();
  }
  const u = new URL(baseUrl);
  u.pathname = `/${name}`;
  return u.toString();
}

export async function dropDatabase(baseUrl: string, name: string, runtime?: RuntimeAccount): Promise<void> {
  const connection = await mysql.createConnection({ uri: serverUrl(baseUrl) });
  try {
    if (runtime) await revokeRuntimeRights(connection, name, runtime);
    await connection.query(`DROP DATABASE IF EXISTS \`${name}\``);
  } finally {
    await connection.end();
  }
}

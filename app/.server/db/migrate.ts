import { drizzle } from "drizzle-orm/mysql2";
import { migrate } from "drizzle-orm/mysql2/migrator";
import mysql from "mysql2/promise";
import path from "node:path";

export async function runMigrations(url: string): Promise<void> {
  const connection = await mysql.createConnection({ uri: url, multipleStatements: false });
  try {
    await migrate(drizzle(connection), { migrationsFolder: path.join(process.cwd(), "drizzle") });
  } finally {
    await connection.end();
  }
}

// A fresh database beside the configured one, for tests: created, migrated, and dropped by the caller.
export async function createDatabase(baseUrl: string, name: string): Promise<string> {
  if (!/^[A-Za-z0-9_]+$/.test(name)) throw new Error(`bad database name ${name}`);
  const u = new URL(baseUrl);
  u.pathname = "/";
  const connection = await mysql.createConnection({ uri: u.toString() });
  try {
    await connection.query(`DROP DATABASE IF EXISTS \`${name}\``);
    await connection.query(`CREATE DATABASE \`${name}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
  } finally {
    await connection.end();
  }
  u.pathname = `/${name}`;
  return u.toString();
}

export async function dropDatabase(baseUrl: string, name: string): Promise<void> {
  const u = new URL(baseUrl);
  u.pathname = "/";
  const connection = await mysql.createConnection({ uri: u.toString() });
  try {
    await connection.query(`DROP DATABASE IF EXISTS \`${name}\``);
  } finally {
    await connection.end();
  }
}

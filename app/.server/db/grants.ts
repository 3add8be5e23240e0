import type mysql from "mysql2/promise";

// Kept for ever: the runtime account may add rows here and read them, never change or remove one.
// (The triggers of the append-only migration refuse UPDATE and DELETE as well, for every account.)
export const APPEND_ONLY_TABLES = ["audit_log", "revisions", "releases", "release_items"] as const;

// The migrator's own record of what has been applied: the runtime account reads it, never edits it.
const MIGRATIONS_TABLE = "__drizzle_migrations";

export type RuntimeAccount = { user: string; host: string };

const quoteName = (name: string) => "`" + name.replace(/`/g, "``") + "`";
// In a database-level GRANT, _ and % are wildcards: escaped, the grant names exactly this database.
const exactDatabase = (name: string) => quoteName(name.replace(/([\\_%])/g, "\\$1"));

/** The runtime account's rights, given by the migration account after every migration: rows only, no schema. */
export async function grantRuntimeRights(connection: mysql.Connection, database: string, account: RuntimeAccount): Promise<void> {
  const to = `${connection.escape(account.user)}@${connection.escape(account.host)}`;
  const db = quoteName(database);
  await connection.query(`GRANT SELECT, INSERT ON ${exactDatabase(database)}.* TO ${to}`);
  const [rows] = await connection.query("SELECT table_name AS name FROM information_schema.tables WHERE table_schema = ? AND table_type = 'BASE TABLE'", [database]);
  for (const { name } of rows as { name: string }[]) {
    if ((APPEND_ONLY_TABLES as readonly string[]).includes(name) || name === MIGRATIONS_TABLE) continue;
    await connection.query(`GRANT UPDATE, DELETE ON ${db}.${quoteName(name)} TO ${to}`);
  }
}

/** Takes the rights away again before a database is dropped, so no grant outlives its tables. */
export async function revokeRuntimeRights(connection: mysql.Connection, database: string, account: RuntimeAccount): Promise<void> {
  const from = `${connection.escape(account.user)}@${connection.escape(account.host)}`;
  const db = quoteName(database);
  const [rows] = await connection.query("SELECT table_name AS name FROM information_schema.tables WHERE table_schema = ? AND table_type = 'BASE TABLE'", [database]);
  for (const { name } of rows as { name: string }[]) {
    if ((APPEND_ONLY_TABLES as readonly string[]).includes(name)) continue;
    await connection.query(`REVOKE UPDATE, DELETE ON ${db}.${quoteName(name)} FROM ${from}`).catch(() => undefined);
  }
  await connection.query(`REVOKE SELECT, INSERT ON ${exactDatabase(database)}.* FROM ${from}`).catch(() => undefined);
}

import type mysql from "mysql2/promise";

/**
 * The tables that record visits rather than data: a session row is written at sign-in and its last-seen time as
 * pages are read, so tests that compare "nothing changed" across requests leave it out.
 */
export const VISIT_TABLES = ["sessions"];

// CHECKSUM TABLE of every table in the database (but those named in `except`): equal maps mean equal contents.
export async function tableChecksums(pool: mysql.Pool, database: string, options: { except?: readonly string[] } = {}): Promise<Record<string, string>> {
  const [tables] = await pool.query("SELECT table_name AS t FROM information_schema.tables WHERE table_schema = ? AND table_type = 'BASE TABLE' ORDER BY table_name", [database]);
  const names = (tables as { t: string }[]).map((r) => r.t).filter((n) => !options.except?.includes(n));
  if (!names.length) return {};
  const [rows] = await pool.query(`CHECKSUM TABLE ${names.map((n) => `\`${database}\`.\`${n}\``).join(", ")} EXTENDED`);
  return Object.fromEntries((rows as { Table: string; Checksum: string | number | null }[]).map((r) => [r.Table, String(r.Checksum)]));
}

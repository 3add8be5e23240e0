import { execFileSync } from "node:child_process";
import { existsSync } from "node:fs";
import path from "node:path";

// The embedded test server, started by scripts/db.sh when it is not running yet.
export function baseDatabaseUrl(): string {
  if (process.env.TEST_DATABASE_URL) return process.env.TEST_DATABASE_URL;
  const root = process.cwd();
  const passFile = path.join(root, ".data", "db-password");
  let running = false;
  try {
    execFileSync("bash", ["scripts/db.sh", "status"], { stdio: "ignore" });
    running = true;
  } catch {
    running = false;
  }
  if (!running || !existsSync(passFile)) execFileSync("bash", ["scripts/db.sh", "start"], { stdio: "inherit" });
  return execFileSync("bash", ["scripts/db.sh", "url", "bandledger_test"], { encoding: "utf8" }).trim();
}

// The migration account of the same server: it creates, migrates and drops the tests' databases.
export function migrationBaseUrl(): string {
  if (process.env.TEST_DATABASE_URL) return process.env.TEST_MIGRATION_DATABASE_URL ?? process.env.TEST_DATABASE_URL;
  baseDatabaseUrl();
  return execFileSync("bash", ["scripts/db.sh", "url", "bandledger_test", "migrate"], { encoding: "utf8" }).trim();
}

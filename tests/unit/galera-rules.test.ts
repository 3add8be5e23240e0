import { readdirSync, readFileSync, statSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";

// What a Galera cluster needs of the schema and the code (MariaDB Galera Cluster's documented limitations, common
// practice): every table has a primary key (rows are replicated and certified by key), only InnoDB tables
// (MyISAM and Aria are not replicated), and no LOCK TABLES or GET_LOCK (locks are local to one node, so they would
// not exclude a writer on another). The cluster's servers also refuse the first two (wsrep_mode and
// enforce_storage_engine in scripts/cluster.sh); this reads the migrations and the code before they reach a server.

const root = process.cwd();
const migrations = readdirSync(path.join(root, "drizzle")).filter((f) => f.endsWith(".sql")).sort();

function sourceFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = path.join(dir, name);
    if (statSync(p).isDirectory()) return sourceFiles(p);
    return /\.(ts|tsx)$/.test(name) && !/\.test\.tsx?$/.test(name) ? [p] : [];
  });
}

function createTables(sql: string): { name: string; body: string }[] {
  const out: { name: string; body: string }[] = [];
  for (const statement of sql.split("--> statement-breakpoint")) {
    const m = /CREATE TABLE\s+(?:IF NOT EXISTS\s+)?`?(\w+)`?\s*\(([\s\S]*)\)([^)]*)$/i.exec(statement.trim().replace(/;\s*$/, ""));
    if (m) out.push({ name: m[1], body: m[2] + m[3] });
  }
  return out;
}

describe("the schema and the code keep to what a Galera cluster replicates", () => {
  it("finds the tables of the migrations", () => {
    expect(migrations.length).toBeGreaterThan(0);
    expect(migrations.flatMap((f) => createTables(readFileSync(path.join(root, "drizzle", f), "utf8"))).length).toBeGreaterThanOrEqual(20);
  });

  it("gives every table a primary key and no other engine than InnoDB", () => {
    for (const file of migrations) {
      const sql = readFileSync(path.join(root, "drizzle", file), "utf8");
      for (const t of createTables(sql)) {
        expect(/PRIMARY KEY/i.test(t.body), `${file}: table ${t.name} has no primary key`).toBe(true);
        const engine = /ENGINE\s*=?\s*(\w+)/i.exec(t.body)?.[1];
        if (engine) expect(engine.toLowerCase(), `${file}: table ${t.name}`).toBe("innodb");
      }
      expect(/\bDROP\s+PRIMARY\s+KEY\b/i.test(sql), `${file} drops a primary key`).toBe(false);
      expect(/ENGINE\s*=?\s*(MyISAM|Aria|MEMORY|CSV)\b/i.test(sql), `${file} names a non-replicated engine`).toBe(false);
    }
  });

  it("takes no table locks and no named locks in the app, the seed or the scripts", () => {
    const files = [...sourceFiles(path.join(root, "app")), ...sourceFiles(path.join(root, "seed-data"))];
    for (const f of files) {
      const text = readFileSync(f, "utf8");
      expect(/\bLOCK\s+TABLES?\b/i.test(text), `${path.relative(root, f)} uses LOCK TABLES`).toBe(false);
      expect(/\bGET_LOCK\s*\(/i.test(text), `${path.relative(root, f)} uses GET_LOCK`).toBe(false);
    }
  });
});

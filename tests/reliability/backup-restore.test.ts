import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdtempSync, statSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startSink, type Sink } from "~/.server/mail/sink";
import { verifyReleaseText } from "~/domain/release-format";
import { loadDemo } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { tableChecksums, VISIT_TABLES } from "../support/checksums";
import { databaseRefusal, freshDatabase, type TestDatabase } from "../support/db";
import { FULL, rounds } from "../support/reliability";
import { HttpClient } from "../support/route-access";

// `npm run db:backup` and `npm run db:restore` (scripts/backup.sh, mariadb-dump) round trip over the demo database
// with its frozen releases plus releases frozen through the app; full mode repeats the round trip.
const ROUND_TRIPS = rounds(1, 3);

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let dataDir: string;
let app: AppServer | null = null;
const ids: Record<string, number> = {};

type Release = { slug: string; number: number; sha256: string; csv_sha256: string };
type Served = Map<string, { status: number; sha256: string; etag: string | null }>;

async function q<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> {
  const [rows] = await t.pool.query(sql, params);
  return rows as T[];
}

async function start(): Promise<AppServer> {
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { BANDLEDGER_DATA_DIR: dataDir } });
  return app;
}

async function stop(): Promise<void> {
  await app?.stop();
  app = null;
}

function npm(script: "db:backup" | "db:restore", file: string): number {
  const started = performance.now();
  execFileSync("npm", ["run", "--silent", script, "--", file], { env: { ...process.env, DATABASE_URL: t.url, MIGRATION_DATABASE_URL: t.adminUrl }, stdio: "pipe" });
  return Math.round(performance.now() - started);
}

async function releases(): Promise<Release[]> {
  return q<Release>("SELECT s.slug, r.number, r.sha256, r.csv_sha256 FROM releases r JOIN parameter_sets s ON s.id = r.set_id ORDER BY s.slug, r.number");
}

/** Every release as the download routes serve it: JSON and CSV, the hash of the bytes and the ETag. */
async function served(list: Release[]): Promise<Served> {
  const reader = await HttpClient.signedIn(app!.url, ids.priya);
  const out: Served = new Map();
  for (const r of list) {
    for (const ext of ["json", "csv"]) {
      const res = await reader.get(`/sets/${r.slug}/releases/${r.number}.${ext}`);
      const bytes = Buffer.from(await res.arrayBuffer());
      if (ext === "json") expect(await verifyReleaseText(bytes.toString("utf8"))).toMatchObject({ ok: true, sha256: r.sha256 });
      out.set(`${r.slug}/${r.number}.${ext}`, { status: res.status, sha256: createHash("sha256").update(bytes).digest("hex"), etag: res.headers.get("etag") });
    }
  }
  return out;
}

async function triggers() {
  return q("SELECT trigger_name, event_manipulation, event_object_table, action_timing, action_statement FROM information_schema.triggers WHERE trigger_schema = ? ORDER BY trigger_name", [t.name]);
}

async function freeze(slug: string): Promise<number> {
  const lead = await HttpClient.signedIn(app!.url, ids.ravi);
  const [{ version }] = await q<{ version: number }>("SELECT version FROM parameter_sets WHERE slug = ?", [slug]);
  const r = await lead.post(`/sets/${slug}`, { intent: "freeze", confirm: "yes", expectedVersion: String(version) });
  expect(r.status).toBe(302);
  return Number(/\/releases\/(\d+)$/.exec(r.headers.get("location") ?? "")?.[1]);
}

beforeAll(async () => {
  t = await freshDatabase("backuprestore");
  await loadDemo(t.db);
  for (const u of await q<{ id: number; email: string }>("SELECT id, email FROM users")) ids[u.email.split(".")[0]] = u.id;
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-backup-mail-"));
  dataDir = mkdtempSync(path.join(os.tmpdir(), "bl-backup-data-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  await start();
});

afterAll(async () => {
  await stop();
  await sink?.close();
  await t?.drop();
});

describe("npm run db:backup, then npm run db:restore", () => {
  it("bring back every table to its checksum, every release to its hash and bytes, and the append-only triggers", async () => {
    for (let round = 1; round <= ROUND_TRIPS; round++) {
      // A release frozen by the app itself, next to the demo's.
      await freeze("hemt-baseline");
      const list = await releases();
      expect(list.length).toBeGreaterThanOrEqual(4);
      const bytesBefore = await served(list);
      const sumsBefore = await tableChecksums(t.pool, t.name);
      const triggersBefore = await triggers();
      expect(triggersBefore.length).toBe(8);

      const file = path.join(mkdtempSync(path.join(os.tmpdir(), "bl-backup-")), "bandledger.sql");
      const backupMs = npm("db:backup", file);
      // Written after the backup: the restore must not know it.
      const lost = await freeze("hemt-baseline");
      await stop();
      const restoreMs = npm("db:restore", file);
      await start();
      console.log(`backup-restore: round ${round}${FULL ? " (full)" : ""}: ${list.length} releases, ${Object.keys(sumsBefore).length} tables; backup ${backupMs} ms (${statSync(file).size} bytes), restore ${restoreMs} ms`);

      expect(await tableChecksums(t.pool, t.name)).toEqual(sumsBefore);
      expect(await releases()).toEqual(list);
      expect(await q("SELECT 1 FROM releases r JOIN parameter_sets s ON s.id = r.set_id WHERE s.slug = 'hemt-baseline' AND r.number = ?", [lost])).toEqual([]);
      const bytesAfter = await served(list);
      expect([...bytesAfter.values()].every((b) => b.status === 200)).toBe(true);
      expect(bytesAfter).toEqual(bytesBefore);
      const reader = await HttpClient.signedIn(app!.url, ids.priya);
      expect((await reader.get(`/sets/hemt-baseline/releases/${lost}.json`)).status).toBe(404);
      expect(await triggers()).toEqual(triggersBefore);

      // The restored triggers still refuse changes, and refuse them with their own messages.
      // The schema owner is stopped by the triggers; the runtime account has no right to try.
      expect(await databaseRefusal(t.pool.query("DELETE FROM audit_log LIMIT 1"))).toMatch(/DELETE command denied/);
      expect(await databaseRefusal(t.admin.pool.query("UPDATE releases SET sha256 = REPEAT('0', 64) LIMIT 1"))).toMatch(/frozen releases are immutable/);
      expect(await databaseRefusal(t.admin.pool.query("DELETE FROM releases LIMIT 1"))).toMatch(/frozen releases are immutable/);
      expect(await databaseRefusal(t.admin.pool.query("UPDATE release_items SET revision_id = revision_id LIMIT 1"))).toMatch(/frozen releases are immutable/);
      expect(await databaseRefusal(t.admin.pool.query("DELETE FROM release_items LIMIT 1"))).toMatch(/frozen releases are immutable/);
      expect(await databaseRefusal(t.admin.pool.query("UPDATE revisions SET notes = 'changed' LIMIT 1"))).toMatch(/revisions are immutable/);
      expect(await databaseRefusal(t.admin.pool.query("DELETE FROM revisions LIMIT 1"))).toMatch(/revisions are immutable/);
      expect(await databaseRefusal(t.admin.pool.query("UPDATE audit_log SET action = 'changed' LIMIT 1"))).toMatch(/audit_log is append-only/);
      expect(await databaseRefusal(t.admin.pool.query("DELETE FROM audit_log LIMIT 1"))).toMatch(/audit_log is append-only/);
      // The reader signed in after the restore: a session more, and nothing else.
      const sumsAfter = await tableChecksums(t.pool, t.name, { except: VISIT_TABLES });
      expect(sumsAfter).toEqual(Object.fromEntries(Object.entries(sumsBefore).filter(([k]) => !k.endsWith(".sessions"))));
    }
  });
});

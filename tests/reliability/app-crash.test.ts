import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startSink, type Sink } from "~/.server/mail/sink";
import { MAX_CSV_ROWS } from "~/domain/csv-proposals";
import { sha256Hex, verifyReleaseText } from "~/domain/release-format";
import { generateSyntheticRegistry } from "../../seed-data/synthetic";
import { startAppServer, type AppServer } from "../support/app-server";
import { tableChecksums as allTableChecksums, VISIT_TABLES } from "../support/checksums";
import { freshDatabase, type TestDatabase } from "../support/db";
import { alertText, committedCount, dirtyReader, killApp, multipartBody, postInPieces, sleep, waitFor, type RawAnswer } from "../support/faults";
import { FULL, rounds } from "../support/reliability";
import { HttpClient } from "../support/route-access";

// The app process killed with SIGKILL in the middle of a 2,000-row CSV upload and in the middle of the freeze of a
// set of thousands of records, over a synthetic registry (invented materials SYN-…, seed-data/synthetic.ts). The
// CSV rows restate a lattice constant of 5.65325 Å (GaAs at 300 K in [V01], Vurgaftman, Meyer, Ram-Mohan, J. Appl.
// Phys. 89, 5815 (2001), from memory) at invented temperatures, only to make 2,000 distinct rows.
const REPEATS = rounds(1, 3);
const REVISIONS = rounds(15_000, 45_000);
const HEADER = "material,quantity,temperature_k,valley,composition_x,value,unit,uncertainty,method,source,source_title,locator,notes";

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let dataDir: string;
let app: AppServer;
let appAlive = false;
const ids: Record<string, number> = {};
let binaries: string[] = [];
let restarts = 0;
const restartMs: number[] = [];

async function q<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> {
  const [rows] = await t.pool.query(sql, params);
  return rows as T[];
}

async function startApp(): Promise<AppServer> {
  const started = performance.now();
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { BANDLEDGER_DATA_DIR: dataDir } });
  appAlive = true;
  restartMs.push(Math.round(performance.now() - started));
  return app;
}

async function kill(): Promise<void> {
  appAlive = false;
  await killApp(app);
  restarts++;
}

async function restartAfterKill(): Promise<void> {
  await kill();
  await startApp();
}

const as = (who: string) => HttpClient.signedIn(app.url, ids[who]);

function csvFor(material: string): Buffer {
  const rows = Array.from({ length: MAX_CSV_ROWS }, (_, i) => `${material},lattice_a,${i + 1},,,5.65325,Å,,compilation,10.1063/1.1368156,Band parameters for III-V compound semiconductors and their alloys,Table 3,crash row ${i + 1}`);
  return Buffer.from([HEADER, ...rows].join("\n"));
}

/** Every batch in the database has all its rows: the kill never leaves a part of one. */
async function expectBatchesWhole(): Promise<number> {
  const batches = await q<{ id: number; row_count: number; n: number; files: number }>(
    "SELECT b.id, b.row_count, (SELECT COUNT(*) FROM proposals p WHERE p.batch_id = b.id) AS n, (SELECT COUNT(*) FROM attachments a WHERE a.batch_id = b.id) AS files FROM csv_batches b");
  for (const b of batches) {
    expect(Number(b.n), `batch ${b.id}`).toBe(b.row_count);
    expect(Number(b.files), `batch ${b.id}`).toBe(1);
  }
  expect(await committedCount(t.pool, "SELECT COUNT(*) FROM proposals WHERE batch_id IS NOT NULL AND batch_id NOT IN (SELECT id FROM csv_batches)")).toBe(0);
  return batches.length;
}

/** Every release of the set is complete (its items, its hash over its bytes) and the numbers run 1…n. */
async function expectReleasesWhole(setId: number): Promise<number> {
  const rows = await q<{ id: number; number: number; sha256: string; canonical_json: string; csv: string; csv_sha256: string; item_count: number; items: number }>(
    "SELECT id, number, sha256, canonical_json, csv, csv_sha256, item_count, (SELECT COUNT(*) FROM release_items ri WHERE ri.release_id = r.id) AS items FROM releases r WHERE set_id = ? ORDER BY number", [setId]);
  expect(rows.map((r) => r.number)).toEqual(rows.map((_, i) => i + 1));
  for (const r of rows) {
    expect(Number(r.items), `release ${r.number}`).toBe(r.item_count);
    expect(await verifyReleaseText(r.canonical_json)).toMatchObject({ ok: true, sha256: r.sha256 });
    expect(await sha256Hex(r.csv)).toBe(r.csv_sha256);
  }
  return rows.length;
}

// The app's data: the sessions of the test's own clients change with every page they read.
const tableChecksums = (pool: Parameters<typeof allTableChecksums>[0], database: string) => allTableChecksums(pool, database, { except: VISIT_TABLES });

function changedTables(before: Record<string, string>, after: Record<string, string>): string[] {
  return Object.keys({ ...before, ...after }).filter((k) => before[k] !== after[k]).map((k) => k.split(".").pop()!).sort();
}

type Upload = { answer: Promise<RawAnswer>; sent: Promise<number>; startedAt: number };

async function upload(material: string, options: { pieces: number; pauseMs: number }): Promise<Upload> {
  const client = await as("tomas");
  const { body, contentType } = multipartBody({ intent: "submit" }, { name: `crash-${material}.csv`, bytes: csvFor(material) });
  let sentAt!: (ms: number) => void;
  const sent = new Promise<number>((r) => (sentAt = r));
  const answer = postInPieces(client, "/uploads", body, contentType, { ...options, onSent: () => sentAt(performance.now()) });
  return { answer, sent, startedAt: performance.now() };
}

beforeAll(async () => {
  t = await freshDatabase("crash");
  const synthetic = await generateSyntheticRegistry(t.url, { revisions: REVISIONS });
  for (const u of await q<{ id: number; email: string }>("SELECT id, email FROM users")) ids[u.email.split(".")[0]] = u.id;
  binaries = (await q<{ key: string }>("SELECT `key` FROM materials WHERE kind = 'binary' ORDER BY id")).map((m) => m.key);
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-crash-mail-"));
  dataDir = mkdtempSync(path.join(os.tmpdir(), "bl-crash-data-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  await startApp();
  console.log(`app-crash: synthetic registry of ${synthetic.records} records and ${synthetic.revisions} revisions in ${synthetic.seconds.toFixed(1)} s${FULL ? " (full)" : ""}`);
});

afterAll(async () => {
  if (appAlive) await app.stop();
  await sink?.close();
  await t?.drop();
  if (restartMs.length) console.log(`app-crash: ${restarts} kills; app start to first answer ${restartMs.join(", ")} ms`);
});

describe("the app killed during a 2,000-row CSV upload", () => {
  it("leaves no part of a batch, changes no table, and takes the same file whole after the restart", async () => {
    let material = 0;
    // A complete upload first: how long the server checks the file before its transaction begins.
    const dirty = await dirtyReader(t.url);
    try {
      const lastBatch = () => committedCount(t.pool, "SELECT COALESCE(MAX(id), 0) FROM csv_batches");
      let since = await lastBatch();
      const first = await upload(binaries[material++], { pieces: 1, pauseMs: 0 });
      const sentAt = await first.sent;
      const txAt = await waitFor(async () => ((await dirty.count("SELECT COUNT(*) FROM csv_batches WHERE id > ?", [since])) > 0 ? performance.now() : 0), { timeoutMs: 60_000, everyMs: 1, what: "the batch row" });
      const done = await first.answer;
      const checkMs = Math.round(txAt - sentAt);
      const totalMs = Math.round(performance.now() - first.startedAt);
      console.log(`app-crash: a ${MAX_CSV_ROWS}-row upload: ${checkMs} ms of server check before its transaction, ${totalMs} ms in all`);
      expect(done.status).toBe(302);
      expect(checkMs).toBeGreaterThan(50);
      expect(await expectBatchesWhole()).toBe(1);

      for (let round = 1; round <= REPEATS; round++) {
        // 1. While the body is still arriving.
        {
          since = await lastBatch();
          const before = await tableChecksums(t.pool, t.name);
          const u = await upload(binaries[material++], { pieces: 40, pauseMs: 25 });
          await sleep(400);
          let sent = false;
          void u.sent.then(() => (sent = true));
          await restartAfterKill();
          const answer = await u.answer;
          expect(sent, "the kill landed before the whole body was sent").toBe(false);
          expect(answer.status).toBeNull();
          expect(await committedCount(t.pool, "SELECT COUNT(*) FROM csv_batches WHERE id > ?", [since])).toBe(0);
          expect(changedTables(before, await tableChecksums(t.pool, t.name))).toEqual([]);
          console.log(`app-crash: round ${round}: killed while the body streamed (connection: ${answer.error}); nothing written`);
        }
        // 2. While the server checks the rows, before its transaction.
        {
          since = await lastBatch();
          const before = await tableChecksums(t.pool, t.name);
          const u = await upload(binaries[material++], { pieces: 1, pauseMs: 0 });
          await u.sent;
          await sleep(Math.round(checkMs / 2));
          const inside = await dirty.count("SELECT COUNT(*) FROM csv_batches WHERE id > ?", [since]);
          await restartAfterKill();
          const answer = await u.answer;
          expect(inside, "the kill landed before the transaction").toBe(0);
          expect(answer.status).toBeNull();
          expect(await committedCount(t.pool, "SELECT COUNT(*) FROM csv_batches WHERE id > ?", [since])).toBe(0);
          expect(changedTables(before, await tableChecksums(t.pool, t.name))).toEqual([]);
          console.log(`app-crash: round ${round}: killed ${Math.round(checkMs / 2)} ms into the server's check; nothing written`);
        }
        // 3. Inside the transaction, between its inserts of proposal rows.
        {
          since = await lastBatch();
          const before = await tableChecksums(t.pool, t.name);
          const u = await upload(binaries[material++], { pieces: 1, pauseMs: 0 });
          await u.sent;
          // The batch row and the first proposal rows are in, uncommitted.
          const uncommitted = await waitFor(() => dirty.count("SELECT COUNT(*) FROM proposals WHERE batch_id > ?", [since]), { timeoutMs: 60_000, everyMs: 1, what: "the uncommitted proposal rows" });
          await kill();
          await startApp();
          const answer = await u.answer;
          expect(answer.status).toBeNull();
          expect(await committedCount(t.pool, "SELECT COUNT(*) FROM csv_batches WHERE id > ?", [since])).toBe(0);
          expect(await committedCount(t.pool, "SELECT COUNT(*) FROM proposals WHERE batch_id > ?", [since])).toBe(0);
          expect(changedTables(before, await tableChecksums(t.pool, t.name))).toEqual([]);
          console.log(`app-crash: round ${round}: killed inside the transaction (${uncommitted} of ${MAX_CSV_ROWS} proposal rows seen written, uncommitted); all rolled back`);
        }
        expect(await expectBatchesWhole()).toBe(1);
      }

      // The app works again: the same kind of file goes in whole, and only the tables of a batch change.
      const before = await tableChecksums(t.pool, t.name);
      const again = await upload(binaries[material++], { pieces: 1, pauseMs: 0 });
      const answer = await again.answer;
      expect(answer.status).toBe(302);
      expect(answer.location).toMatch(/^\/uploads\/\d+$/);
      expect(await expectBatchesWhole()).toBe(2);
      expect(changedTables(before, await tableChecksums(t.pool, t.name))).toEqual(["attachments", "audit_log", "csv_batches", "notices", "proposals"]);
    } finally {
      await dirty.close();
    }
  });
});

describe("the app killed during the freeze of a big set", () => {
  it("leaves each release complete with its hash or absent, and freezes again after the restart", async () => {
    let client = await as("ravi");
    const made = await client.post("/sets/new", { name: "Crash freeze", purpose: "Every current synthetic value, frozen while the app is killed" });
    expect(made.status).toBe(302);
    const slug = made.headers.get("location")!.split("/").pop()!;
    // Whole families until the set has some thousands of members (a release of about 1.3 KB per member).
    const families = ["arsenides", "phosphides", "antimonides", "nitrides", "group-iv"];
    const memberCount = async () => committedCount(t.pool, "SELECT COUNT(*) FROM set_members m JOIN parameter_sets s ON s.id = m.set_id WHERE s.slug = ?", [slug]);
    while ((await memberCount()) < 4_000) {
      expect((await client.post(`/sets/${slug}`, { intent: "add-filter", family: families.shift()! })).status).toBe(302);
    }
    const [set] = await q<{ id: number }>("SELECT id FROM parameter_sets WHERE slug = ?", [slug]);
    const members = await memberCount();
    const version = async () => (await q<{ version: number }>("SELECT version FROM parameter_sets WHERE id = ?", [set.id]))[0].version;

    const freeze = async (c: HttpClient) => {
      const started = performance.now();
      const r = await c.post(`/sets/${slug}`, { intent: "freeze", confirm: "yes", expectedVersion: String(await version()) }).catch((e: Error) => ({ status: null as number | null, error: e, headers: new Headers() }));
      return { status: r.status, location: r.headers.get("location"), ms: Math.round(performance.now() - started) };
    };
    const first = await freeze(client);
    expect(first.status).toBe(302);
    const [{ bytes }] = await q<{ bytes: number }>("SELECT LENGTH(canonical_json) + LENGTH(csv) AS bytes FROM releases WHERE set_id = ? AND number = 1", [set.id]);
    console.log(`app-crash: a freeze of ${members} members takes ${first.ms} ms and writes ${(Number(bytes) / 1048576).toFixed(1)} MiB of release bytes`);
    expect(await expectReleasesWhole(set.id)).toBe(1);

    const dirty = await dirtyReader(t.url);
    try {
      for (let round = 1; round <= REPEATS; round++) {
        // Early (the set's row is bumped, the pins not yet read) and late (the release row is in, its items going in).
        for (const moment of ["early", "late"] as const) {
          const v = await version();
          const releasesBefore = await committedCount(t.pool, "SELECT COUNT(*) FROM releases WHERE set_id = ?", [set.id]);
          const before = await tableChecksums(t.pool, t.name);
          const pending = freeze(client);
          await waitFor(async () => moment === "early"
            ? (await dirty.count("SELECT version FROM parameter_sets WHERE id = ?", [set.id])) > v
            : (await dirty.count("SELECT COUNT(*) FROM releases WHERE set_id = ?", [set.id])) > releasesBefore,
          { timeoutMs: 60_000, everyMs: 1, what: `the freeze's ${moment} write` });
          await kill();
          await startApp();
          client = await as("ravi");
          const answer = await pending;
          expect(answer.status).toBeNull();
          expect(await committedCount(t.pool, "SELECT COUNT(*) FROM releases WHERE set_id = ?", [set.id])).toBe(releasesBefore);
          expect(await version()).toBe(v);
          expect(await expectReleasesWhole(set.id)).toBe(releasesBefore);
          expect(changedTables(before, await tableChecksums(t.pool, t.name))).toEqual([]);
          console.log(`app-crash: round ${round}: killed ${moment} in the freeze (${moment === "early" ? "the set's row bumped" : "the release row written"}, uncommitted); no release written`);
        }
      }
    } finally {
      await dirty.close();
    }

    // The app works again: the next freeze gets the next number, complete, and downloads as its hashed bytes.
    const before = await tableChecksums(t.pool, t.name);
    const again = await freeze(client);
    expect(again.status).toBe(302);
    expect(again.location).toBe(`/sets/${slug}/releases/2`);
    expect(await expectReleasesWhole(set.id)).toBe(2);
    expect(changedTables(before, await tableChecksums(t.pool, t.name))).toEqual(["audit_log", "parameter_sets", "release_items", "releases"]);
    const download = await client.get(`/sets/${slug}/releases/2.json`);
    expect(download.status).toBe(200);
    const [r2] = await q<{ sha256: string }>("SELECT sha256 FROM releases WHERE set_id = ? AND number = 2", [set.id]);
    expect(await verifyReleaseText(await download.text())).toMatchObject({ ok: true, sha256: r2.sha256 });

    // The rest of the registry too: frozen whole, or refused with its size when one release would exceed what the
    // database takes in one statement (16 MiB by default), never a dropped connection passed off as an outage.
    for (const family of families) expect((await client.post(`/sets/${slug}`, { intent: "add-filter", family })).status).toBe(302);
    const all = await memberCount();
    const sums = await tableChecksums(t.pool, t.name);
    const whole = await client.post(`/sets/${slug}`, { intent: "freeze", confirm: "yes", expectedVersion: String(await version()) });
    const html = await whole.text();
    if (whole.status === 302) {
      expect(await expectReleasesWhole(set.id)).toBe(3);
      console.log(`app-crash: the whole registry (${all} members) frozen as release 3`);
    } else {
      expect(whole.status).toBe(422);
      const message = alertText(html);
      expect(message).toMatch(/^Release 3 of Crash freeze would be [\d.]+ MiB \(\d+ values\); the database takes at most [\d.]+ MiB in one release\. Split the set into smaller sets, or raise the database's max_allowed_packet\.$/);
      expect(await expectReleasesWhole(set.id)).toBe(2);
      expect(changedTables(sums, await tableChecksums(t.pool, t.name))).toEqual([]);
      console.log(`app-crash: the whole registry (${all} members) refused: ${message}`);
    }
  });
});

import { execFile } from "node:child_process";
import { createHash } from "node:crypto";
import { existsSync, mkdtempSync, readFileSync, utimesSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import mysql from "mysql2/promise";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startSink, type Sink } from "~/.server/mail/sink";
import { loadDemo } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { committedCount, killApp, multipartBody, postInPieces, waitFor } from "../support/faults";
import { HttpClient } from "../support/route-access";
import { TEST_SESSION_SECRET } from "../support/session";

// The app killed after it stored an uploaded CSV and before it committed the batch that names the file; then the
// housekeeping of `npm run digest` and of the app's start. The rows restate the GaAs lattice constant of 5.65325 Å
// at 300 K ([V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), from memory) at invented
// temperatures, only to make distinct rows.
const GRACE_MS = 60 * 60 * 1000;
const HEADER = "material,quantity,temperature_k,valley,composition_x,value,unit,uncertainty,method,source,source_title,locator,notes";
const CSV = Buffer.from([HEADER, ...Array.from({ length: 20 }, (_, i) => `GaAs,lattice_a,${i + 11},,,5.65325,Å,,compilation,10.1063/1.1368156,Band parameters for III-V compound semiconductors and their alloys,GaAs parameter table,sweep row ${i + 1}`)].join("\n"));
const SHA = createHash("sha256").update(CSV).digest("hex");

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let dataDir: string;
let app: AppServer | null = null;
let tomasId: number;

const storedFile = () => path.join(dataDir, "files", SHA.slice(0, 2), SHA);

async function start(): Promise<AppServer> {
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { BANDLEDGER_DATA_DIR: dataDir } });
  return app;
}

function digestRun(): Promise<{ status: number; stderr: string }> {
  const env = {
    ...process.env, VITEST: "", DATABASE_URL: t.url, SMTP_URL: `smtp://127.0.0.1:${sink.port}`, BANDLEDGER_DATA_DIR: dataDir,
    BANDLEDGER_PUBLIC_URL: "http://bandledger.test", SESSION_SECRET: TEST_SESSION_SECRET,
  };
  return new Promise((resolve) => {
    execFile("npm", ["run", "--silent", "digest"], { encoding: "utf8", env }, (error, _stdout, stderr) => resolve({ status: error ? Number(error.code ?? 1) : 0, stderr }));
  });
}

beforeAll(async () => {
  t = await freshDatabase("sweep");
  await loadDemo(t.db);
  const [[tomas]] = (await t.pool.query("SELECT id FROM users WHERE email = 'tomas.okafor@kestrel-devices.test'")) as unknown as [{ id: number }[]];
  tomasId = tomas.id;
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-sweep-mail-"));
  dataDir = mkdtempSync(path.join(os.tmpdir(), "bl-sweep-data-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  await start();
});

afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await t?.drop();
});

describe("a CSV upload killed between storing its file and committing its batch", () => {
  it("leaves a file no row names, which the sweep keeps through the grace period and removes after it", async () => {
    const client = await HttpClient.signedIn(app!.url, tomasId);
    // The test holds the batch table, so the app stops at its first insert, after the file is stored.
    // LOCK TABLES is the schema owner's right; the app's runtime account has none.
    const holder = await mysql.createConnection({ uri: t.adminUrl });
    let answer;
    try {
      await holder.query("LOCK TABLES csv_batches WRITE");
      const { body, contentType } = multipartBody({ intent: "submit" }, { name: "killed.csv", bytes: CSV });
      const pending = postInPieces(client, "/uploads", body, contentType, { pieces: 1, pauseMs: 0 });
      await waitFor(() => existsSync(storedFile()), { timeoutMs: 60_000, what: "the uploaded file in the data folder" });
      await waitFor(async () => (await committedCount(t.pool, "SELECT COUNT(*) FROM information_schema.PROCESSLIST WHERE INFO LIKE 'insert into `csv_batches`%'")) > 0, { timeoutMs: 30_000, what: "the batch insert waiting for its table" });
      await killApp(app!);
      app = null;
      answer = await pending;
    } finally {
      await holder.query("UNLOCK TABLES");
      await holder.end();
    }
    expect(answer.status).toBeNull();
    expect(await committedCount(t.pool, "SELECT COUNT(*) FROM csv_batches")).toBe(0);
    expect(await committedCount(t.pool, "SELECT COUNT(*) FROM attachments WHERE sha256 = ?", [SHA])).toBe(0);
    expect(createHash("sha256").update(readFileSync(storedFile())).digest("hex")).toBe(SHA);

    // The scheduler's run right after: the file is younger than the grace period, so an upload could still name it.
    const early = await digestRun();
    expect(early.status, early.stderr).toBe(0);
    expect(early.stderr).toContain("housekeeping: no file to remove; 1 unreferenced file younger than the grace period kept");
    expect(existsSync(storedFile())).toBe(true);

    // An hour on (the file's time set back past the grace period), the app's start sweeps it.
    const then = new Date(Date.now() - GRACE_MS - 60_000);
    utimesSync(storedFile(), then, then);
    const restarted = await start();
    const log = path.join("test-artifacts", `app-${restarted.port}.log`);
    const line = await waitFor(() => /bandledger: housekeeping: .*/.exec(readFileSync(log, "utf8"))?.[0], { timeoutMs: 30_000, what: "the start-up sweep's line in the app's log" });
    expect(line).toMatch(/^bandledger: housekeeping: removed 1 unreferenced file and 0 unfinished pieces \(\d+ bytes\)$/);
    expect(existsSync(storedFile())).toBe(false);

    // The same file goes in whole afterwards, stored again and downloadable byte for byte.
    const again = await HttpClient.signedIn(restarted.url, tomasId);
    const { body, contentType } = multipartBody({ intent: "submit" }, { name: "killed.csv", bytes: CSV });
    const done = await postInPieces(again, "/uploads", body, contentType, { pieces: 1, pauseMs: 0 });
    expect(done.status).toBe(302);
    const batchPath = done.location!;
    expect(batchPath).toMatch(/^\/uploads\/\d+$/);
    const download = await again.get(`${batchPath}/file`);
    expect(download.status).toBe(200);
    expect(Buffer.compare(Buffer.from(await download.arrayBuffer()), CSV)).toBe(0);
    expect((await digestRun()).stderr).toContain("housekeeping: no file to remove");
    expect(existsSync(storedFile())).toBe(true);
  });
});

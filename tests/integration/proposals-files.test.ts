import { execFile, execFileSync } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, renameSync, utimesSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq, isNull } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "~/.server/db/client";
import { FILE_GRACE_MS, sweepUnreferencedFiles } from "~/.server/housekeeping";
import { attachments, auditLog, notices, proposals, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { loadUser, type CurrentUser } from "~/.server/permissions";
import { readLimitedFormData, readStoredFile, storedFilePath, storeFile, StorageError } from "~/.server/storage";
import { attachFile, readAttachment } from "~/.server/workflow/attachments";
import { isWorkflowError } from "~/.server/workflow/errors";
import { loadDemo } from "../../seed-data/load";
import { freshDatabase, type TestDatabase } from "../support/db";
import { readMailbox } from "../support/mailbox";

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let dataDir: string;
const who: Record<string, CurrentUser> = {};

// The smallest well-formed PDF header and trailer; only the magic bytes matter to the check.
const PDF = Buffer.from("%PDF-1.4\n1 0 obj <<>> endobj\ntrailer <<>>\n%%EOF\n", "latin1");
const PNG = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0x0d]);

function digestCli(): Promise<{ status: number; stderr: string }> {
  return new Promise((resolve) => {
    execFile("npm", ["run", "--silent", "digest"], { encoding: "utf8", env: { ...process.env, VITEST: "" } }, (error, _stdout, stderr) => {
      resolve({ status: error ? Number(error.code ?? 1) : 0, stderr });
    });
  });
}

/** Sets a file's modification time back by more than the sweep's grace period: as if it had lain there that long. */
function ageBeyondGrace(file: string): void {
  const then = new Date(Date.now() - FILE_GRACE_MS - 60_000);
  utimesSync(file, then, then);
}

async function refused(promise: Promise<unknown>): Promise<Error> {
  try {
    await promise;
  } catch (e) {
    return e as Error;
  }
  throw new Error("accepted");
}

beforeAll(async () => {
  t = await freshDatabase("propfiles");
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-files-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  dataDir = mkdtempSync(path.join(os.tmpdir(), "bl-files-data-"));
  process.env.DATABASE_URL = t.url;
  process.env.SMTP_URL = `smtp://127.0.0.1:${sink.port}`;
  process.env.BANDLEDGER_PUBLIC_URL = "http://bandledger.test";
  process.env.SESSION_SECRET = "files-test-session-secret-0123456789abcdef01";
  process.env.BANDLEDGER_DATA_DIR = dataDir;
  await loadDemo(t.db);
  for (const u of await t.db.select().from(users)) {
    const loaded = await loadUser(u.id);
    if (loaded) who[u.email.split(".")[0]] = loaded;
  }
});
afterAll(async () => {
  await closeDb();
  await sink?.close();
  await t?.drop();
});

describe("content-addressed storage", () => {
  it("keeps a PDF under its SHA-256 (as sha256sum computes it), once however often it is stored", async () => {
    const a = await storeFile(PDF, { fileName: "source.pdf", allowed: ["pdf"] });
    const b = await storeFile(PDF, { fileName: "again.pdf", allowed: ["pdf"] });
    expect(a).toEqual(b);
    expect(a.kind).toBe("pdf");
    expect(a.contentType).toBe("application/pdf");
    const file = storedFilePath(a.sha256);
    expect(file).toBe(path.join(dataDir, "files", a.sha256.slice(0, 2), a.sha256));
    expect(execFileSync("sha256sum", [file], { encoding: "utf8" }).split(" ")[0]).toBe(a.sha256);
    expect(readdirSync(path.dirname(file))).toEqual([a.sha256]);
    expect(Buffer.compare(await readStoredFile(a.sha256), PDF)).toBe(0);
  });

  it("judges the type by content, not by the name, and refuses what is too large", async () => {
    expect((await refused(storeFile(PNG, { fileName: "source.pdf", allowed: ["pdf", "csv", "text"] }))).message).toBe("“source.pdf” is not a PDF or a CSV file in UTF-8 or a UTF-8 text file by its content.");
    expect(await refused(storeFile(Buffer.from("a,b\n1,\u00e9\n", "latin1"), { fileName: "m.csv", allowed: ["csv"] }))).toBeInstanceOf(StorageError);
    expect(await refused(storeFile(Buffer.from("T,PL\n4,1.51\u0007\n"), { fileName: "m.csv", allowed: ["csv"] }))).toBeInstanceOf(StorageError);
    expect((await storeFile(Buffer.from("T_K,PL_eV\n77,1.508\n"), { fileName: "pl-77K.csv", allowed: ["csv"] })).kind).toBe("csv");
    expect((await storeFile(Buffer.from("77 K photoluminescence, peak 1.508 eV\n"), { fileName: "notes.txt", allowed: ["text"] })).kind).toBe("text");
    const big = await refused(storeFile(Buffer.alloc(11, 0x61), { fileName: "x.txt", allowed: ["text"], maxBytes: 10 }));
    expect(big).toMatchObject({ code: "too_large", message: "The file is 11 bytes; at most 10 bytes is kept." });
    expect(() => storedFilePath("../../etc/passwd")).toThrow(StorageError);
  });

  it("stops reading a posted body as soon as it passes the limit", async () => {
    const declared = new Request("http://x.test/", { method: "POST", headers: { "content-length": "2000000", "content-type": "text/plain" }, body: "a" });
    expect((await refused(readLimitedFormData(declared, 1000))).message).toMatch(/^The upload is 1\.9 MB; at most 1000 bytes is taken\./);
    const stream = new ReadableStream<Uint8Array>({
      pull(controller) {
        controller.enqueue(new Uint8Array(600));
      },
    });
    const chunked = new Request("http://x.test/", { method: "POST", body: stream, duplex: "half", headers: { "content-type": "application/x-www-form-urlencoded" } } as RequestInit);
    expect(await refused(readLimitedFormData(chunked, 1000))).toBeInstanceOf(StorageError);
    const small = await readLimitedFormData(new Request("http://x.test/", { method: "POST", body: new URLSearchParams({ intent: "save" }) }), 1000);
    expect(small.get("intent")).toBe("save");
  });
});

describe("attachments", () => {
  it("are kept with the author's open proposal, read by those involved, and audited", async () => {
    const [draft] = await t.db.select().from(proposals).where(and(eq(proposals.authorId, who.mei.id), eq(proposals.state, "draft")));
    const id = await attachFile(who.mei, draft.id, new File([PDF], "KD-EPI-2026-014.pdf", { type: "application/pdf" }));
    const read = await readAttachment(who.mei, draft.id, id);
    expect(read).toMatchObject({ fileName: "KD-EPI-2026-014.pdf", contentType: "application/pdf" });
    expect(Buffer.compare(read.bytes, PDF)).toBe(0);
    const stranger = await refused(attachFile(who.tomas, draft.id, new File([PDF], "x.pdf")));
    expect(isWorkflowError(stranger, "not_found")).toBe(true);
    // A draft is its author's alone; once submitted, the family's leads read its files too.
    expect(isWorkflowError(await refused(readAttachment(who.ravi, draft.id, id)), "not_found")).toBe(true);
    const [submitted] = await t.db.select().from(proposals).where(and(eq(proposals.authorId, who.tomas.id), eq(proposals.state, "submitted")));
    const pdfId = await attachFile(who.tomas, submitted.id, new File([PDF], "paper.pdf"));
    expect((await readAttachment(who.ravi, submitted.id, pdfId)).fileName).toBe("paper.pdf");
    expect(isWorkflowError(await refused(readAttachment(who.mei, submitted.id, pdfId)), "not_found")).toBe(true);
    const [row] = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "proposal.upload"), eq(auditLog.targetId, String(submitted.id))));
    expect(row).toMatchObject({ actorId: who.tomas.id, detail: expect.objectContaining({ fileName: "paper.pdf" }) });
  });
});

describe("the sweep of unreferenced files", () => {
  it("removes a stored file no row names once it is older than the grace period, and keeps the named and the young", async () => {
    // What an upload killed between storing its file and committing its row leaves: a stored file no row names.
    const orphan = await storeFile(Buffer.from("T_K,PL_eV\n4,1.519\n"), { fileName: "killed.csv", allowed: ["csv"] });
    const young = await storeFile(Buffer.from("T_K,PL_eV\n10,1.5187\n"), { fileName: "in-flight.csv", allowed: ["csv"] });
    const [named] = await t.db.select().from(attachments).limit(1);
    for (const sha of [orphan.sha256, named.sha256]) ageBeyondGrace(storedFilePath(sha));
    // The piece of a write cut off by a kill (written aside, never renamed), an old one and one being written now.
    const oldPiece = `${storedFilePath(young.sha256)}.0123456789ab.part`;
    const newPiece = `${storedFilePath(young.sha256)}.ba9876543210.part`;
    writeFileSync(oldPiece, "T_K,PL");
    writeFileSync(newPiece, "T_K,PL");
    ageBeyondGrace(oldPiece);
    const stranger = path.join(path.dirname(storedFilePath(young.sha256)), "README");
    writeFileSync(stranger, "not a stored file");
    ageBeyondGrace(stranger);

    const sweep = await sweepUnreferencedFiles();
    expect(sweep.removed).toEqual([orphan.sha256]);
    expect(sweep.removedPieces).toBe(1);
    expect(sweep.bytesFreed).toBe(orphan.sizeBytes + 6);
    expect(existsSync(storedFilePath(orphan.sha256))).toBe(false);
    expect(existsSync(oldPiece)).toBe(false);
    for (const kept of [storedFilePath(named.sha256), storedFilePath(young.sha256), newPiece, stranger]) expect(existsSync(kept), kept).toBe(true);
    // The young one and the unnamed files the tests above stored a moment ago.
    expect(sweep.keptInGrace).toBeGreaterThanOrEqual(1);
    expect(Buffer.compare(await readStoredFile(named.sha256), PDF)).toBe(0);
  });

  it("gives an upload that stores the bytes of an old unnamed copy the whole grace period again", async () => {
    const bytes = Buffer.from("T_K,PL_eV\n77,1.5076\n");
    const first = await storeFile(bytes, { fileName: "first.csv", allowed: ["csv"] });
    ageBeyondGrace(storedFilePath(first.sha256));
    // A second upload of the same bytes has stored its file and not yet committed the row that names it.
    await storeFile(bytes, { fileName: "second.csv", allowed: ["csv"] });
    const sweep = await sweepUnreferencedFiles();
    expect(sweep.removed).not.toContain(first.sha256);
    expect(Buffer.compare(await readStoredFile(first.sha256), bytes)).toBe(0);
  });

  it("puts back a file that a sweep stopped midway had moved aside", async () => {
    const [named] = await t.db.select().from(attachments).limit(1);
    const file = storedFilePath(named.sha256);
    renameSync(file, `${file}.00aa11bb22cc.sweep`);
    await sweepUnreferencedFiles();
    expect(readdirSync(path.dirname(file)).filter((f) => f.startsWith(named.sha256))).toEqual([named.sha256]);
    expect(Buffer.compare(await readStoredFile(named.sha256), PDF)).toBe(0);
  });
});

describe("npm run digest", () => {
  it("sends each digest person one message with every waiting notice and marks them sent", async () => {
    const waiting = await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), isNull(notices.sentAt)));
    expect(waiting.length).toBeGreaterThan(0);
    // Asynchronously: the sink that receives the digest runs in this process.
    const run = await digestCli();
    expect(run.status, run.stderr).toBe(0);
    expect(run.stderr).toContain(`sent 1 digest with ${waiting.length} notice${waiting.length === 1 ? "" : "s"}`);
    const mails = (await readMailbox(mailboxDir)).filter((m) => m.to.includes("hanna.lindqvist@kestrel-devices.test"));
    expect(mails).toHaveLength(1);
    for (const n of waiting) expect(mails[0].text).toContain(n.link!);
    expect(await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), isNull(notices.sentAt)))).toHaveLength(0);
    const again = await digestCli();
    expect(again.stderr).toContain("sent 0 digests with 0 notices");
    expect(existsSync(dataDir)).toBe(true);
  });

  it("then sweeps the files no row names that are older than the grace period", async () => {
    const orphan = await storeFile(Buffer.from("T_K,PL_eV\n300,1.4225\n"), { fileName: "killed.csv", allowed: ["csv"] });
    ageBeyondGrace(storedFilePath(orphan.sha256));
    const run = await digestCli();
    expect(run.status, run.stderr).toBe(0);
    expect(run.stderr).toMatch(/housekeeping: removed 1 unreferenced file and 0 unfinished pieces \(\d+ bytes\)/);
    expect(existsSync(storedFilePath(orphan.sha256))).toBe(false);
  });
});

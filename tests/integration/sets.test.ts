import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq, isNull, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { auditLog, notices, parameterSets, releaseItems, releases, records } from "~/.server/db/schema";
import type { Sink } from "~/.server/mail/sink";
import { loadUser, type CurrentUser } from "~/.server/permissions";
import { SetError } from "~/.server/sets/errors";
import { compareSet } from "~/.server/sets/compare";
import { itemsOfRelease, loadSetView, requireRelease, requireSet } from "~/.server/sets/queries";
import { addMember, addMembersByFilter, createSet, freezeSet, removeMember, setReleaseNotices } from "~/.server/sets/service";
import { sendDigests } from "~/.server/workflow/notices";
import { sha256Hex, verifyReleaseText } from "~/domain/release-format";
import { CODATA_EDITION } from "~/domain/physics/constants";
import packageJson from "../../package.json";
import { loadDemo } from "../../seed-data/load";
import { TEAM_DOMAIN } from "../../seed-data/team";
import { databaseRefusal, freshDatabase, type TestDatabase } from "../support/db";
import { readLastMail, readMailbox } from "../support/mailbox";

// Values checked below are the demo registry's [V01] values (Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89,
// 5815 (2001), from memory): GaAs Eg(Γ, 0 K) = 1.519 eV, a(300 K) = 5.65325 Å.

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
const people: Record<string, CurrentUser> = {};

async function person(name: string): Promise<CurrentUser> {
  if (!people[name]) {
    const [row] = await t.pool.query("SELECT id FROM users WHERE email = ?", [`${name}@${TEAM_DOMAIN}`]);
    people[name] = (await loadUser((row as { id: number }[])[0].id))!;
  }
  return people[name];
}

async function recordIdOf(material: string, quantity: string, conditionKey: string): Promise<number> {
  const [rows] = await t.pool.query(
    "SELECT r.id FROM records r JOIN materials m ON m.id = r.material_id JOIN quantities q ON q.id = r.quantity_id WHERE m.`key` = ? AND q.`key` = ? AND r.condition_key = ?",
    [material, quantity, conditionKey],
  );
  return (rows as { id: number }[])[0].id;
}

async function refusal(promise: Promise<unknown>): Promise<SetError> {
  try {
    await promise;
  } catch (e) {
    if (e instanceof SetError) return e;
    throw e;
  }
  throw new Error("the service accepted it");
}

beforeAll(async () => {
  t = await freshDatabase("sets");
  await loadDemo(t.db);
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-sets-mail-"));
  const { startSink } = await import("~/.server/mail/sink");
  sink = await startSink({ port: 0, dir: mailboxDir });
  process.env.DATABASE_URL = t.url;
  process.env.SMTP_URL = `smtp://127.0.0.1:${sink.port}`;
  process.env.BANDLEDGER_PUBLIC_URL = "http://bandledger.test:3000";
});

afterAll(async () => {
  const { closeDb } = await import("~/.server/db/client");
  await closeDb();
  await sink?.close();
  await t?.drop();
});

describe("the demo set HEMT baseline", () => {
  it("has releases 1 to 3 whose stored bytes verify against their stored hashes", async () => {
    const set = await requireSet("hemt-baseline");
    for (const n of [1, 2, 3]) {
      const r = await requireRelease(set, n);
      const json = await verifyReleaseText(r.canonicalJson);
      const csv = await verifyReleaseText(r.csv);
      expect(json).toMatchObject({ ok: true, sha256: r.sha256 });
      expect(csv).toMatchObject({ ok: true, sha256: r.sha256 });
      expect(await sha256Hex(r.csv)).toBe(r.csvSha256);
    }
  });

  it("shows between releases 2 and 3 what changed and why: the gap restated with its potential, the measured AlGaAs gap added", async () => {
    const c = await compareSet("hemt-baseline", 2, 3);
    expect(c.added.map((e) => e.label)).toEqual(["AlGaAs Eg (Γ, x = 0.3, 300 K)"]);
    expect(c.added[0].new).toMatchObject({ value: "1.838", unit: "eV", uncertainty: "0.003", source: { reportNumber: "KD-EPI-2026-014" } });
    expect(c.changed.map((e) => e.label)).toEqual(["GaAs Eg (Γ, 300 K)"]);
    expect(c.changed[0].old).toMatchObject({ value: "1.4225", revisionSeq: 2 });
    expect(c.changed[0].new).toMatchObject({ value: "1.4225", revisionSeq: 3 });
    expect(c.changed[0].new?.notes).toMatch(/nearly-free-electron/);
    expect(c.removed).toEqual([]);
    const c12 = await compareSet("hemt-baseline", 1, 2);
    expect(c12.removed.map((e) => e.label)).toEqual(["GaAs a (295 K)"]);
    expect(c12.changed.find((e) => e.label === "GaAs a (300 K)")).toMatchObject({ old: { value: "5.6533" }, new: { value: "5.65325" } });
  });
});

describe("composing and freezing a set", () => {
  it("refuses a reader, adds only records with a current approved value, one by one or by filter", async () => {
    const reader = await person("priya.raman");
    expect((await refusal(createSet(reader, { name: "Reader's set", purpose: "should not exist" }, null))).code).toBe("forbidden");
    const contributor = await person("tomas.okafor");
    const bad = await createSet(contributor, { name: "x", purpose: "" }, null);
    expect(bad).toMatchObject({ ok: false, errors: { name: expect.any(String), purpose: expect.any(String) } });
    const made = await createSet(contributor, { name: "GaAs gaps", purpose: "Γ, X and L gaps for a band-alignment check" }, null);
    expect(made).toMatchObject({ ok: true, set: { slug: "gaas-gaps", version: 1 } });
    const again = await createSet(contributor, { name: "GaAs gaps", purpose: "duplicate" }, null);
    expect(again).toMatchObject({ ok: false, errors: { slug: expect.stringMatching(/exists/) } });

    const byFilter = await addMembersByFilter(contributor, "gaas-gaps", { material: "GaAs", quantity: "eg" }, null);
    // GaAs Eg records of the demo: Γ at 300 K and 77 K, and the 0 K fits at Γ, X and L.
    expect(byFilter).toEqual({ added: 5, matched: 5 });
    expect(await addMembersByFilter(contributor, "gaas-gaps", { material: "GaAs", quantity: "eg" }, null)).toEqual({ added: 0, matched: 5 });
    const retired = await recordIdOf("GaAs", "lattice_a", "T=295|V=|x=");
    expect((await refusal(addMember(contributor, "gaas-gaps", retired, null))).code).toBe("not_eligible");
    expect((await refusal(addMember(contributor, "gaas-gaps", 999_999, null))).code).toBe("not_found");
    expect((await refusal(addMembersByFilter(contributor, "gaas-gaps", {}, null))).code).toBe("invalid");
    const lattice = await recordIdOf("GaAs", "lattice_a", "T=300|V=|x=");
    expect(await addMember(contributor, "gaas-gaps", lattice, null)).toEqual({ added: true });
    expect(await removeMember(contributor, "gaas-gaps", lattice, null)).toEqual({ removed: true });
    const view = await loadSetView("gaas-gaps");
    expect(view.members).toHaveLength(5);
    expect(view.set.version).toBe(4);
    expect(view.members.every((m) => m.sinceLastRelease === null)).toBe(true);
  });

  it("lets only a lead or an admin freeze, and pins the current revisions with CODATA edition and software version", async () => {
    expect((await refusal(freezeSet(await person("tomas.okafor"), "gaas-gaps", {}, null))).code).toBe("forbidden");
    const lead = await person("ravi.menon");
    const view = await loadSetView("gaas-gaps");
    const written = await freezeSet(lead, "gaas-gaps", { expectedVersion: view.set.version }, null);
    expect(written).toMatchObject({ number: 1, itemCount: 5 });
    const release = await requireRelease(await requireSet("gaas-gaps"), 1);
    const items = itemsOfRelease(release);
    expect(items.map((i) => i.revisionId).sort()).toEqual(view.members.map((m) => m.current!.revisionId).sort());
    expect(items.find((i) => i.valley === "G" && i.temperatureKind === "fit0")).toMatchObject({ value: "1.519", unit: "eV", source: { doi: "10.1063/1.1368156" } });
    const doc = JSON.parse(release.canonicalJson);
    expect(doc.content.release).toMatchObject({ number: 1, frozenBy: "Ravi Menon", codataEdition: CODATA_EDITION, softwareVersion: packageJson.version, itemCount: 5 });
    expect(doc.sha256).toBe(written.sha256);
    const [rows] = await t.pool.query("SELECT COUNT(*) AS n FROM release_items WHERE release_id = ?", [written.releaseId]);
    expect(Number((rows as { n: number }[])[0].n)).toBe(5);
    const audits = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "set.frozen"), eq(auditLog.targetId, String(written.releaseId))));
    expect(audits).toHaveLength(1);
    expect(audits[0].detail).toMatchObject({ slug: "gaas-gaps", number: 1, sha256: written.sha256 });
  });

  it("refuses a freeze of an empty set", async () => {
    const lead = await person("ravi.menon");
    await createSet(lead, { name: "Empty for now", purpose: "nothing yet" }, null);
    expect((await refusal(freezeSet(lead, "empty-for-now", {}, null))).code).toBe("invalid");
  });

  it("a frozen release cannot be changed or deleted, even by direct SQL: the database refuses", async () => {
    const [r] = await t.db.select().from(releases).limit(1);
    expect(await databaseRefusal(t.db.update(releases).set({ sha256: "0".repeat(64) }).where(eq(releases.id, r.id)))).toMatch(/UPDATE command denied/);
    expect(await databaseRefusal(t.db.delete(releaseItems).where(eq(releaseItems.releaseId, r.id)))).toMatch(/DELETE command denied/);
    expect(await databaseRefusal(t.admin.db.update(releases).set({ sha256: "0".repeat(64) }).where(eq(releases.id, r.id)))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.db.update(releases).set({ canonicalJson: "{}" }).where(eq(releases.id, r.id)))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.db.delete(releases).where(eq(releases.id, r.id)))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.db.update(releaseItems).set({ revisionId: 1 }).where(eq(releaseItems.releaseId, r.id)))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.db.delete(releaseItems).where(eq(releaseItems.releaseId, r.id)))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.pool.query("DELETE FROM releases"))).toMatch(/immutable/);
    const [still] = await t.db.select().from(releases).where(eq(releases.id, r.id));
    expect(still.sha256).toBe(r.sha256);
    expect((await verifyReleaseText(still.canonicalJson)).ok).toBe(true);
  });
});

describe("moved since the last release, comparing, and release notices", () => {
  it("marks a member whose record got a new revision, compares it with the release, and sends release notices on the next freeze", async () => {
    const lead = await person("ravi.menon");
    const reader = await person("priya.raman");
    expect(await setReleaseNotices(reader, "gaas-gaps", true, null)).toEqual({ changed: true });
    expect(await setReleaseNotices(reader, "gaas-gaps", true, null)).toEqual({ changed: false });
    await setReleaseNotices(lead, "gaas-gaps", true, null);
    const digestReader = await person("hanna.lindqvist");
    await setReleaseNotices(digestReader, "gaas-gaps", true, null);
    const noticesAudit = await t.db.select().from(auditLog).where(and(eq(auditLog.action, "set.notices_on"), eq(auditLog.actorId, reader.id)));
    expect(noticesAudit).toHaveLength(1);

    const recordId = await recordIdOf("GaAs", "eg", "T=fit0|V=X|x=");
    const contributor = await person("tomas.okafor");
    const [sourceRows] = await t.pool.query("SELECT id FROM sources WHERE doi = '10.1063/1.1368156'");
    const v01 = (sourceRows as { id: number }[])[0].id;
    const { appendRevision } = await import("~/.server/registry/records");
    const [{ current }] = (await t.pool.query("SELECT current_revision_id AS current FROM records WHERE id = ?", [recordId]))[0] as { current: number }[];
    const { db } = await import("~/.server/db/client");
    await db().transaction((tx) => appendRevision(tx, {
      recordId, baseRevisionId: current, proposedBy: contributor.id, approvedBy: lead.id,
      revision: { value: "1.9810", unit: "eV", method: "compilation", sourceId: v01, locator: "Table 2, X valley", notes: "One more stated digit." },
    }));
    const view = await loadSetView("gaas-gaps");
    expect(view.members.find((m) => m.recordId === recordId)?.sinceLastRelease).toBe("changed");
    expect(view.members.filter((m) => m.sinceLastRelease === "unchanged")).toHaveLength(4);

    const toCurrent = await compareSet("gaas-gaps", 1, "current");
    expect(toCurrent.changed).toHaveLength(1);
    expect(toCurrent.changed[0]).toMatchObject({ label: "GaAs Eg (X, 0 K fit)", old: { value: "1.981" }, new: { value: "1.9810", locator: "Table 2, X valley" } });
    expect(toCurrent.to).toEqual({ release: "current", sha256: null });

    const before = Date.now();
    const written = await freezeSet(lead, "gaas-gaps", {}, null);
    expect(written.number).toBe(2);
    const mail = await readLastMail(mailboxDir, reader.email, { after: before });
    expect(mail.subject).toBe("GaAs gaps: release 2 is frozen and ready to download");
    expect(mail.text).toContain("You receive this because you asked for release notices of the parameter set GaAs gaps; stop them on its page.");
    expect(mail.text).not.toMatch(/watch/i);
    expect(mail.text).toContain(written.sha256);
    expect(mail.text).toContain("Against release 1: 1 changed, 0 added, 0 removed, 4 unchanged.");
    expect(mail.text).toContain("changed GaAs Eg (X, 0 K fit): 1.981 eV → 1.9810 eV");
    expect(mail.html).toContain("/sets/gaas-gaps/compare?from=1&amp;to=2");
    const toLead = (await readMailbox(mailboxDir)).filter((m) => m.to.includes(lead.email.toLowerCase()) && m.subject.includes("release 2"));
    expect(toLead).toEqual([]);
    // Hanna chose the daily digest: no mail now, one queued notice with the same summary.
    const toDigest = (await readMailbox(mailboxDir)).filter((m) => m.to.includes(digestReader.email.toLowerCase()) && m.subject.includes("release 2"));
    expect(toDigest).toEqual([]);
    const queued = await t.db.select().from(notices).where(and(eq(notices.userId, digestReader.id), eq(notices.kind, "set.frozen")));
    expect(queued).toHaveLength(1);
    expect(queued[0].bodyText).toContain("Against release 1: 1 changed, 0 added, 0 removed, 4 unchanged.");
    expect(queued[0].sentAt).toBeNull();
    // The digest that carries it says it is about a set, and why it comes.
    const waiting = await t.db.select().from(notices).where(and(eq(notices.userId, digestReader.id), isNull(notices.sentAt)));
    // Hanna, a lead, also has the demo's proposal notices waiting.
    expect(waiting.filter((n) => n.kind === "set.frozen")).toHaveLength(1);
    expect(waiting.some((n) => n.kind.startsWith("proposal."))).toBe(true);
    expect((await sendDigests()).failed).toBe(0);
    const digest = (await readMailbox(mailboxDir)).filter((m) => m.to.includes(digestReader.email.toLowerCase()) && m.subject.startsWith("Bandledger digest"));
    expect(digest.map((m) => m.subject)).toEqual([`Bandledger digest: ${waiting.length} notices about proposals and sets`]);
    expect(digest[0].text).toContain("asked for release notices of a set");
    await setReleaseNotices(digestReader, "gaas-gaps", false, null);
    expect(await setReleaseNotices(reader, "gaas-gaps", false, null)).toEqual({ changed: true });
    expect(await t.db.select().from(auditLog).where(and(eq(auditLog.action, "set.notices_off"), eq(auditLog.actorId, reader.id)))).toHaveLength(1);
  });

  it("compareSet refuses the same release twice and an unknown release", async () => {
    expect((await refusal(compareSet("gaas-gaps", 1, 1))).code).toBe("invalid");
    expect((await refusal(compareSet("gaas-gaps", 1, 9))).code).toBe("not_found");
    expect((await refusal(compareSet("no-such-set", 1, 2))).code).toBe("not_found");
  });
});

describe("two freezes at the same moment", () => {
  it("with the version both saw: one release and one clear conflict, never a duplicate number", async () => {
    const lead = await person("ravi.menon");
    const admin = await person("ines.carvalho");
    const { version } = (await loadSetView("gaas-gaps")).set;
    const results = await Promise.allSettled([
      freezeSet(lead, "gaas-gaps", { expectedVersion: version }, null),
      freezeSet(admin, "gaas-gaps", { expectedVersion: version }, null),
    ]);
    const ok = results.filter((r) => r.status === "fulfilled");
    const failed = results.filter((r): r is PromiseRejectedResult => r.status === "rejected");
    expect(ok).toHaveLength(1);
    expect(failed).toHaveLength(1);
    expect(failed[0].reason).toBeInstanceOf(SetError);
    expect(failed[0].reason.code).toBe("conflict");
    expect(failed[0].reason.message).toMatch(/changed since you opened it/);
  });

  it("without a version: releases N and N+1", async () => {
    const lead = await person("ravi.menon");
    const admin = await person("ines.carvalho");
    const results = await Promise.all([freezeSet(lead, "gaas-gaps", {}, null), freezeSet(admin, "gaas-gaps", {}, null), freezeSet(lead, "gaas-gaps", {}, null)]);
    expect(results.map((r) => r.number).sort()).toEqual([4, 5, 6]);
    const set = await requireSet("gaas-gaps");
    const [rows] = await t.pool.query("SELECT number FROM releases WHERE set_id = ? ORDER BY number", [set.id]);
    expect((rows as { number: number }[]).map((r) => r.number)).toEqual([1, 2, 3, 4, 5, 6]);
    const [{ n }] = await t.db.select({ n: sql<number>`COUNT(DISTINCT ${releases.sha256})` }).from(releases).where(eq(releases.setId, set.id));
    // Same values, but each release records its own number and time, so each has its own hash.
    expect(Number(n)).toBe(6);
  });

  it("an edit after the page was opened makes the freeze a conflict", async () => {
    const lead = await person("ravi.menon");
    const { version } = (await loadSetView("gaas-gaps")).set;
    await addMember(lead, "gaas-gaps", await recordIdOf("GaAs", "lattice_a", "T=300|V=|x="), null);
    const e = await refusal(freezeSet(lead, "gaas-gaps", { expectedVersion: version }, null));
    expect(e.code).toBe("conflict");
    expect(e.status).toBe(409);
    const [set] = await t.db.select().from(parameterSets).where(eq(parameterSets.slug, "gaas-gaps"));
    expect(set.version).toBe(version + 1);
  });

  it("refuses to freeze a member that was retired after it joined", async () => {
    const lead = await person("ravi.menon");
    const recordId = await recordIdOf("GaAs", "lattice_a", "T=300|V=|x=");
    const [rec] = await t.db.select().from(records).where(eq(records.id, recordId));
    const { retireRecord } = await import("~/.server/registry/records");
    const { db } = await import("~/.server/db/client");
    const proposer = await person("tomas.okafor");
    await db().transaction((tx) => retireRecord(tx, { recordId, baseRevisionId: rec.currentRevisionId!, reason: "test: superseded", proposedBy: proposer.id, approvedBy: lead.id }));
    expect((await loadSetView("gaas-gaps")).members.find((m) => m.recordId === recordId)?.current).toBeNull();
    const e = await refusal(freezeSet(lead, "gaas-gaps", {}, null));
    expect(e.code).toBe("not_eligible");
    expect(e.message).toContain(`#${recordId}`);
  });
});

import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq, inArray, isNull, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { closeDb } from "~/.server/db/client";
import { runWithPeerAddress } from "~/.server/auth/client-address";
import { auditLog, draftStashes, materials, notices, proposals, quantities, records, revisions, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { loadUser, type CurrentUser } from "~/.server/permissions";
import { decideProposal } from "~/.server/workflow/decide";
import { isWorkflowError, type WorkflowError } from "~/.server/workflow/errors";
import { sendDigests } from "~/.server/workflow/notices";
import { addComment, createDraft, carryForwardProposal, submitProposal, withdrawProposal } from "~/.server/workflow/proposals";
import { MAX_STASHES, restoreStash, stashPayload, STASHES_PER_ADDRESS } from "~/.server/workflow/stash";
import { readProposalPayload } from "~/domain/proposal-schemas";
import { listReviewQueue, loadProposalPage } from "~/.server/workflow/views";
import { loadDemo } from "../../seed-data/load";
import { freshDatabase, type TestDatabase } from "../support/db";
import { readMailbox } from "../support/mailbox";

// Values proposed here, and their published sources:
// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), doi:10.1063/1.1368156, values from memory;
// [Var67] Varshni, Physica 34, 149 (1967): GaAs Eg(Γ, 300 K) = 1.519 − 5.405e-4·300²/(300 + 204) = 1.4224821 eV (calc);
// [Vegard21] Vegard, Z. Phys. 5, 17 (1921): Al(0.3)Ga(0.7)As a = 5.655605 Å with the [V01] end members (calc).
const V01 = { kind: "doi", doi: "10.1063/1.1368156", title: "Band parameters for III–V compound semiconductors and their alloys", authors: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan", year: "2001" };

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
const who: Record<string, CurrentUser> = {};
const recordIds: Record<string, number> = {};

async function recordOf(materialKey: string, quantityKey: string, conditionKey: string) {
  const [r] = await t.db
    .select({ id: records.id, currentRevisionId: records.currentRevisionId, version: records.version })
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(and(eq(materials.key, materialKey), eq(quantities.key, quantityKey), eq(records.conditionKey, conditionKey)));
  return r;
}

function gapRevision(recordId: number, value: string, extra: Record<string, unknown> = {}) {
  return {
    kind: "revision", recordId: String(recordId), value, unit: "eV", method: "calculated", source: V01,
    locator: "GaAs parameter table: Eg(0) = 1.519 eV, α = 0.5405 meV/K, β = 204 K", notes: "Varshni [Var67] with the [V01] parameters at 300 K.", ...extra,
  };
}

async function submitted(author: CurrentUser, payload: Record<string, unknown>): Promise<number> {
  const id = await createDraft(author, payload);
  await submitProposal(author, id, payload);
  return id;
}

async function versionOf(id: number) {
  const [p] = await t.db.select({ version: proposals.version, state: proposals.state }).from(proposals).where(eq(proposals.id, id));
  return p;
}

async function refusal(promise: Promise<unknown>): Promise<WorkflowError> {
  try {
    await promise;
  } catch (e) {
    if (isWorkflowError(e)) return e;
    throw e;
  }
  throw new Error("the service accepted it");
}

async function mailsTo(email: string) {
  return (await readMailbox(mailboxDir)).filter((m) => m.to.includes(email));
}

beforeAll(async () => {
  t = await freshDatabase("proposals");
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-proposals-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  process.env.DATABASE_URL = t.url;
  process.env.SMTP_URL = `smtp://127.0.0.1:${sink.port}`;
  process.env.BANDLEDGER_PUBLIC_URL = "http://bandledger.test";
  process.env.SESSION_SECRET = "proposals-test-session-secret-0123456789abcdef";
  process.env.BANDLEDGER_DATA_DIR = mkdtempSync(path.join(os.tmpdir(), "bl-proposals-data-"));
  await loadDemo(t.db);
  for (const u of await t.db.select().from(users)) {
    const loaded = await loadUser(u.id);
    if (loaded) who[u.email.split(".")[0]] = loaded;
  }
  recordIds.gaasGap300 = (await recordOf("GaAs", "eg", "T=300|V=G|x="))!.id;
  recordIds.gaasGap77 = (await recordOf("GaAs", "eg", "T=77|V=G|x="))!.id;
  recordIds.gasbGap = (await recordOf("GaSb", "eg", "T=fit0|V=G|x="))!.id;
});
afterAll(async () => {
  await closeDb();
  await sink?.close();
  await t?.drop();
});

describe("submitting a proposal", () => {
  it("notices every lead of the family but the author: at once by mail, or queued for a digest", async () => {
    const after = Date.now();
    const id = await submitted(who.tomas, gapRevision(recordIds.gaasGap300, "1.42248"));
    const toRavi = (await mailsTo("ravi.menon@kestrel-devices.test")).filter((m) => Number(m.file.split("-")[0]) >= after);
    expect(toRavi).toHaveLength(1);
    expect(toRavi[0].subject).toBe("GaAs · Band gap (Γ, 300 K): a proposal waits for your decision");
    expect(toRavi[0].text).not.toMatch(/review/i);
    expect(toRavi[0].text).toContain("1.4225 eV → 1.42248 eV");
    expect(toRavi[0].text).toContain(`http://bandledger.test/proposals/${id}`);
    expect(toRavi[0].html).toContain(`href="http://bandledger.test/proposals/${id}"`);
    expect(await mailsTo("hanna.lindqvist@kestrel-devices.test")).toHaveLength(0);
    const queued = await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), isNull(notices.sentAt), eq(notices.link, `http://bandledger.test/proposals/${id}`)));
    expect(queued.map((n) => n.kind)).toEqual(["proposal.submitted"]);
    expect(await t.db.select().from(notices).where(eq(notices.userId, who.tomas.id))).toHaveLength(0);
    await withdrawProposal(who.tomas, id);
  });

  it("records the consistency-check status at submission for the review queue", async () => {
    // Varshni [Var67] with the [V01] GaAs fit gives 1.4224821 eV at 300 K: 1.42248 passes, 1.30 fails by far.
    const good = await submitted(who.tomas, gapRevision(recordIds.gaasGap300, "1.42248"));
    const bad = await submitted(who.tomas, gapRevision(recordIds.gaasGap300, "1.30"));
    const rows = await t.db.select({ id: proposals.id, checkStatus: proposals.checkStatus }).from(proposals).where(inArray(proposals.id, [good, bad]));
    const status = new Map(rows.map((r) => [r.id, r.checkStatus]));
    expect(status.get(good)).toBe("pass");
    expect(status.get(bad)).toBe("fail");
    await withdrawProposal(who.tomas, good);
    await withdrawProposal(who.tomas, bad);
  });

  it("saves what was typed before it refuses a proposal with errors, with a message at each wrong field", async () => {
    const typed = gapRevision(recordIds.gaasGap300, "1,4225", { unit: "eV", locator: "", source: { ...V01, doi: "doi 10.1063" } });
    const id = await createDraft(who.tomas, { kind: "revision", recordId: String(recordIds.gaasGap300) });
    const e = await refusal(submitProposal(who.tomas, id, typed));
    expect(e.code).toBe("invalid");
    expect(e.details.fieldErrors).toMatchObject({
      value: "Use a point as the decimal separator, without thousands separators.",
      locator: expect.stringMatching(/page, table or figure/),
      "source.doi": expect.stringMatching(/^A DOI starts with 10\./),
    });
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, id));
    expect(row.state).toBe("draft");
    expect(row.payload).toMatchObject({ value: "1,4225", source: { doi: "doi 10.1063" }, notes: typed.notes });
  });

  it("refuses a BibTeX entry that does not parse, at the source field", async () => {
    const payload = gapRevision(recordIds.gaasGap300, "1.42248", { source: { kind: "bibtex", bibtex: "@article{broken, title = {No closing brace" } });
    const id = await createDraft(who.tomas, payload);
    const e = await refusal(submitProposal(who.tomas, id, payload));
    expect(e.details.fieldErrors?.["source.bibtex"]).toMatch(/BibTeX entry could not be read|no title/);
  });
});

describe("deciding", () => {
  it("refuses the author's own decision (four-eyes), even for a lead or an admin", async () => {
    const id = await submitted(who.ravi, gapRevision(recordIds.gaasGap77, "1.507596", { locator: "GaAs parameter table", notes: "Varshni [Var67] with [V01] at 77 K." }));
    const { version } = await versionOf(id);
    const e = await refusal(decideProposal(who.ravi, id, { decision: "approve", version }));
    expect(e.code).toBe("own_proposal");
    expect(e.message).toMatch(/four-eyes/);
    expect((await versionOf(id)).state).toBe("submitted");
    const page = await loadProposalPage(who.ravi, id);
    expect(page.can.decide).toBe(false);
    expect(page.can.decideBlocked).toBe("You wrote this proposal: another lead of Arsenides or an admin decides it (four-eyes rule).");
    expect(e.message).toBe(page.can.decideBlocked);
    const done = await decideProposal(who.hanna, id, { decision: "approve", version });
    expect(done.state).toBe("approved");
  });

  it("words who decides for the author's role: a contributor is told a lead decides, not 'another lead'", async () => {
    const byContributor = await submitted(who.tomas, gapRevision(recordIds.gaasGap77, "1.5076", { locator: "GaAs parameter table", notes: "Four digits." }));
    const contributorPage = await loadProposalPage(who.tomas, byContributor);
    expect(contributorPage.can.decideBlocked).toBe("You wrote this proposal: a lead of Arsenides or an admin decides it, and the decision comes to you by e-mail.");
    expect(contributorPage.can.decideBlocked).not.toMatch(/another lead/);
    const byAdmin = await submitted(who.ines, gapRevision(recordIds.gaasGap77, "1.50760", { locator: "GaAs parameter table", notes: "Five digits." }));
    expect((await loadProposalPage(who.ines, byAdmin)).can.decideBlocked).toBe("You wrote this proposal: a lead of Arsenides or another admin decides it (four-eyes rule).");
    const e = await refusal(decideProposal(who.ines, byAdmin, { decision: "approve", version: (await versionOf(byAdmin)).version }));
    expect(e.message).toMatch(/another admin/);
  });

  it("refuses a lead of another family and a contributor, and lets an admin decide", async () => {
    const id = await submitted(who.tomas, {
      kind: "revision", recordId: String(recordIds.gasbGap), value: "0.812", unit: "eV", method: "compilation", source: V01,
      locator: "GaSb parameter table", notes: "Restated from [V01] with a page reference.", validFromK: "0", validToK: "400",
    });
    const { version } = await versionOf(id);
    const hanna = await refusal(decideProposal(who.hanna, id, { decision: "approve", version }));
    expect(hanna.code).toBe("forbidden");
    expect(hanna.message).toBe("Only a lead of Antimonides or an admin decides this proposal.");
    expect((await refusal(decideProposal(who.mei, id, { decision: "approve", version }))).code).toBe("forbidden");
    expect(await listReviewQueue(who.hanna).then((q) => q.map((r) => r.id))).not.toContain(id);
    expect(await listReviewQueue(who.ravi).then((q) => q.map((r) => r.id))).toContain(id);
    const done = await decideProposal(who.ines, id, { decision: "reject", version, reason: "Same value as the current revision; nothing changes." });
    expect(done.state).toBe("rejected");
  });

  it("requires a reason to reject, and mails it to the author", async () => {
    const after = Date.now();
    const id = await submitted(who.tomas, gapRevision(recordIds.gaasGap300, "1.4224821"));
    const { version } = await versionOf(id);
    expect((await refusal(decideProposal(who.ravi, id, { decision: "reject", version, reason: "  " }))).details.fieldErrors?.reason).toMatch(/Say why/);
    await decideProposal(who.ravi, id, { decision: "reject", version, reason: "Keep five digits, as the 77 K record does." });
    const mail = (await mailsTo("tomas.okafor@kestrel-devices.test")).filter((m) => Number(m.file.split("-")[0]) >= after && m.subject.endsWith("rejected your proposal"));
    expect(mail.map((m) => m.subject)).toEqual(["GaAs · Band gap (Γ, 300 K): Ravi Menon rejected your proposal"]);
    expect(mail[0].text).toContain("Ravi Menon rejected your proposal.");
    expect(mail[0].text).toContain("Reason: Keep five digits, as the 77 K record does.");
    expect((await refusal(decideProposal(who.hanna, id, { decision: "approve", version: version + 1 }))).message).toMatch(/^This proposal was already rejected by Ravi Menon/);
  });

  it("approves: the new revision is current, the old one stays in the history, with who proposed and who approved", async () => {
    const before = await recordOf("GaAs", "eg", "T=300|V=G|x=");
    const id = await submitted(who.tomas, gapRevision(recordIds.gaasGap300, "1.42248"));
    const { version } = await versionOf(id);
    const done = await decideProposal(who.hanna, id, { decision: "approve", version });
    const after = await recordOf("GaAs", "eg", "T=300|V=G|x=");
    expect(after.currentRevisionId).toBe(done.resultRevisionId);
    expect(after.version).toBe(before.version + 1);
    const history = await t.db.select().from(revisions).where(eq(revisions.recordId, after.id));
    expect(history.map((r) => r.id)).toContain(before.currentRevisionId);
    const [added] = history.filter((r) => r.id === done.resultRevisionId);
    expect(added).toMatchObject({ value: "1.42248", proposalId: id, proposedBy: who.tomas.id, approvedBy: who.hanna.id, method: "calculated" });
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, id));
    expect(row).toMatchObject({ state: "approved", decidedBy: who.hanna.id, resultRevisionId: done.resultRevisionId, version: version + 1 });
  });

  it("creates a new record with its first revision ([Vegard21] Al(0.3)Ga(0.7)As a = 5.655605 Å)", async () => {
    const id = await submitted(who.mei, {
      kind: "new_record", material: "AlGaAs", quantity: "lattice_a", temperatureMode: "stated", temperatureK: "300", composition: "0.3",
      value: "5.655605", unit: "Å", method: "calculated", source: V01, locator: "AlAs and GaAs parameter tables", notes: "Vegard's law between AlAs and GaAs.",
    });
    const done = await decideProposal(who.ravi, id, { decision: "approve", version: (await versionOf(id)).version });
    const rec = await recordOf("AlGaAs", "lattice_a", "T=300|V=|x=0.3");
    expect(rec.id).toBe(done.recordId);
    expect(rec.currentRevisionId).toBe(done.resultRevisionId);
  });

  it("retires a record with the reason as the retirement's note", async () => {
    const rec = await recordOf("GaAs", "eg", "T=77|V=G|x=");
    const id = await submitted(who.tomas, { kind: "retirement", recordId: String(rec.id), reason: "The 0 K Varshni record gives 77 K; a stored copy only drifts." });
    const done = await decideProposal(who.ravi, id, { decision: "approve", version: (await versionOf(id)).version });
    const [r] = await t.db.select({ status: records.status, current: records.currentRevisionId }).from(records).where(eq(records.id, rec.id));
    expect(r).toEqual({ status: "retired", current: done.resultRevisionId });
    const [rev] = await t.db.select().from(revisions).where(eq(revisions.id, done.resultRevisionId!));
    expect(rev).toMatchObject({ kind: "retirement", notes: "The 0 K Varshni record gives 77 K; a stored copy only drifts.", proposalId: id });
  });
});

describe("stale proposals", () => {
  it("are refused until their author carries them forward, and the author is shown the new current value", async () => {
    const rec = await recordOf("GaAs", "eg", "T=300|V=G|x=");
    const [based] = await t.db.select({ value: revisions.value }).from(revisions).where(eq(revisions.id, rec.currentRevisionId!));
    const first = await submitted(who.tomas, gapRevision(rec.id, "1.4224"));
    const second = await submitted(who.mei, gapRevision(rec.id, "1.4226"));
    await decideProposal(who.ravi, first, { decision: "approve", version: (await versionOf(first)).version });
    const { version } = await versionOf(second);
    const stale = await refusal(decideProposal(who.hanna, second, { decision: "approve", version }));
    expect(stale.code).toBe("stale");
    expect(stale.message).toMatch(/its current value is now 1\.4224 eV/);
    const page = await loadProposalPage(who.mei, second);
    expect(page.stale).toMatchObject({ currentText: "1.4224 eV" });
    expect(page.can.carryForward).toBe(true);
    expect(page.can.approve).toBe(false);
    expect((await loadProposalPage(who.hanna, second)).can.carryForward).toBe(false);
    expect((await refusal(carryForwardProposal(who.tomas, second, version))).code).toBe("forbidden");
    expect((await refusal(carryForwardProposal(who.mei, second, version - 1))).code).toBe("changed");
    const after = Date.now();
    await carryForwardProposal(who.mei, second, version);
    // The leads it went to hear of the new base as each chose: Ravi by mail now, Hanna in her next digest.
    const toRavi = (await mailsTo("ravi.menon@kestrel-devices.test")).filter((m) => Number(m.file.split("-")[0]) >= after);
    expect(toRavi.map((m) => m.subject)).toEqual(["GaAs · Band gap (Γ, 300 K): carried forward onto the current value"]);
    expect(toRavi[0].text).toContain("Mei Tanaka carried forward a proposal that waits for your decision: it now stands on the record's current value.");
    expect(toRavi[0].text).not.toMatch(/rebas|review/i);
    expect(toRavi[0].text).toContain(`Now based on 1.4224 eV (it was based on ${based.value} eV).`);
    expect(toRavi[0].text).toContain("1.4224 eV → 1.4226 eV");
    expect(toRavi[0].text).toContain(`http://bandledger.test/proposals/${second}`);
    const link = `http://bandledger.test/proposals/${second}`;
    const forHanna = await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), eq(notices.kind, "proposal.carried_forward"), eq(notices.link, link)));
    expect(forHanna.map((n) => n.sentAt)).toEqual([null]);
    expect(forHanna[0].bodyText).toContain(`Now based on 1.4224 eV (it was based on ${based.value} eV).`);
    expect(await t.db.select().from(notices).where(and(eq(notices.userId, who.mei.id), eq(notices.kind, "proposal.carried_forward")))).toHaveLength(0);
    expect((await refusal(decideProposal(who.hanna, second, { decision: "approve", version }))).code).toBe("changed");
    const done = await decideProposal(who.hanna, second, { decision: "approve", version: version + 1 });
    const [added] = await t.db.select().from(revisions).where(eq(revisions.id, done.resultRevisionId!));
    expect(added.value).toBe("1.4226");
  });

  it("turns a new-record proposal into a new value when the record was created meanwhile", async () => {
    const payload = {
      kind: "new_record", material: "InGaAs", quantity: "lattice_a", temperatureMode: "stated", temperatureK: "300", composition: "0.53",
      value: "5.8687", unit: "Å", method: "calculated", source: V01, locator: "InAs and GaAs parameter tables", notes: "Vegard's law, lattice-matched to InP.",
    };
    const a = await submitted(who.tomas, payload);
    const b = await submitted(who.mei, { ...payload, value: "5.869" });
    await decideProposal(who.ravi, a, { decision: "approve", version: (await versionOf(a)).version });
    const e = await refusal(decideProposal(who.ravi, b, { decision: "approve", version: (await versionOf(b)).version }));
    expect(e.code).toBe("stale");
    await carryForwardProposal(who.mei, b, (await versionOf(b)).version);
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, b));
    expect(row.kind).toBe("revision");
    const [told] = await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), eq(notices.kind, "proposal.carried_forward"), eq(notices.link, `http://bandledger.test/proposals/${b}`)));
    expect(told.bodyText).toContain("Now based on 5.8687 Å (it was based on no value (a new record)).");
    await decideProposal(who.ravi, b, { decision: "approve", version: row.version });
  });

  it("tells no one of a draft carried forward, since no lead was told of the draft", async () => {
    const draft = await createDraft(who.mei, gapRevision(recordIds.gaasGap300, "1.42251"));
    const other = await submitted(who.tomas, gapRevision(recordIds.gaasGap300, "1.42249"));
    await decideProposal(who.ravi, other, { decision: "approve", version: (await versionOf(other)).version });
    await carryForwardProposal(who.mei, draft, (await versionOf(draft)).version);
    expect(await t.db.select().from(notices).where(eq(notices.link, `http://bandledger.test/proposals/${draft}`))).toHaveLength(0);
    await withdrawProposal(who.mei, draft);
  });
});

describe("many leads deciding at once", () => {
  it("lets exactly one decision win: one revision, one version step, one notice, one mail", async () => {
    const rec = await recordOf("GaAs", "eg", "T=300|V=G|x=");
    const id = await submitted(who.tomas, gapRevision(rec.id, "1.42249"));
    const { version } = await versionOf(id);
    const revisionsBefore = (await t.db.select({ n: sql<number>`count(*)` }).from(revisions).where(eq(revisions.recordId, rec.id)))[0].n;
    const mailsBefore = (await mailsTo("tomas.okafor@kestrel-devices.test")).length;
    const deciders = [who.ravi, who.hanna, who.ines];
    const attempts = Array.from({ length: 20 }, (_, i) =>
      decideProposal(deciders[i % 3], id, i % 2 === 0 ? { decision: "approve", version } : { decision: "reject", version, reason: `Attempt ${i}` }),
    );
    const results = await Promise.allSettled(attempts);
    const won = results.filter((r) => r.status === "fulfilled");
    const lost = results.filter((r): r is PromiseRejectedResult => r.status === "rejected");
    expect(won).toHaveLength(1);
    expect(lost).toHaveLength(19);
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, id));
    expect(row.version).toBe(version + 1);
    const winner = deciders.find((d) => d.id === row.decidedBy)!;
    for (const r of lost) {
      expect(isWorkflowError(r.reason, "already_decided"), String(r.reason)).toBe(true);
      expect(r.reason.message).toContain(`already ${row.state} by ${winner.name}`);
    }
    const revisionsAfter = (await t.db.select({ n: sql<number>`count(*)` }).from(revisions).where(eq(revisions.recordId, rec.id)))[0].n;
    expect(Number(revisionsAfter) - Number(revisionsBefore)).toBe(row.state === "approved" ? 1 : 0);
    const decisionNotices = await t.db.select().from(notices).where(and(eq(notices.userId, who.tomas.id), inArray(notices.kind, ["proposal.approved", "proposal.rejected"]), eq(notices.link, `http://bandledger.test/proposals/${id}`)));
    expect(decisionNotices).toHaveLength(1);
    expect((await mailsTo("tomas.okafor@kestrel-devices.test")).length - mailsBefore).toBe(1);
    const audits = await t.db.select().from(auditLog).where(and(inArray(auditLog.action, ["proposal.approve", "proposal.reject"]), eq(auditLog.targetId, String(id))));
    expect(audits).toHaveLength(1);
    expect(audits[0].actorId).toBe(winner.id);
  });
});

describe("remarks, digests and the audit log", () => {
  it("notices the people in the thread, and sends each digest person one digest", async () => {
    const id = await submitted(who.tomas, gapRevision(recordIds.gaasGap300, "1.42250"));
    await addComment(who.hanna, id, "Why five decimals here?");
    const after = Date.now();
    await addComment(who.tomas, id, "To match the 0 K fit to the last digit.");
    const toHanna = await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), eq(notices.kind, "proposal.remark")));
    expect(toHanna).toHaveLength(1);
    expect(toHanna[0].bodyText).toContain("“To match the 0 K fit to the last digit.”");
    expect((await mailsTo("ravi.menon@kestrel-devices.test")).filter((m) => m.subject.startsWith("Tomás Okafor added a remark"))).toHaveLength(0);
    const toTomas = (await mailsTo("tomas.okafor@kestrel-devices.test")).filter((m) => m.subject.startsWith("Hanna Lindqvist added a remark"));
    expect(toTomas.map((m) => m.subject)).toEqual(["Hanna Lindqvist added a remark on GaAs · Band gap (Γ, 300 K)"]);
    expect(toTomas[0].text).not.toMatch(/comment/i);
    const pending = await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), isNull(notices.sentAt)));
    expect(pending.length).toBeGreaterThan(1);
    const run = await sendDigests();
    expect(run.failed).toBe(0);
    const digests = (await mailsTo("hanna.lindqvist@kestrel-devices.test")).filter((m) => Number(m.file.split("-")[0]) >= after);
    expect(digests).toHaveLength(1);
    expect(digests[0].subject).toBe(`Bandledger digest: ${pending.length} notices about proposals`);
    expect(digests[0].text).toContain(`http://bandledger.test/proposals/${id}`);
    expect(await t.db.select().from(notices).where(and(eq(notices.userId, who.hanna.id), isNull(notices.sentAt)))).toHaveLength(0);
    expect(await sendDigests()).toEqual({ people: 0, notices: 0, failed: 0 });
    await withdrawProposal(who.tomas, id);
    expect((await refusal(decideProposal(who.ravi, id, { decision: "approve", version: (await versionOf(id)).version }))).message).toMatch(/withdrew/);
  });

  it("writes every proposal event to the append-only audit log", async () => {
    const rows = await t.db.select({ action: auditLog.action }).from(auditLog).where(sql`${auditLog.action} LIKE 'proposal.%'`);
    const actions = new Set(rows.map((r) => r.action));
    for (const a of ["proposal.create", "proposal.submit", "proposal.remark", "proposal.carry_forward", "proposal.approve", "proposal.reject", "proposal.withdraw"]) expect(actions).toContain(a);
  });
});

describe("a draft posted after the session ran out", () => {
  it("is kept under a signed cookie and comes back into the draft once its author signs in again", async () => {
    const id = await createDraft(who.tomas, gapRevision(recordIds.gaasGap300, ""));
    const typed = gapRevision(recordIds.gaasGap300, "1.42247", { notes: "typed while the session ran out" });
    const first = (await stashPayload(new Request("http://bandledger.test/proposals/1/edit"), readProposalPayload(gapRevision(recordIds.gaasGap300, "1.4")), id)).setCookie!;
    const setCookie = (await stashPayload(new Request("http://bandledger.test/proposals/1/edit", { headers: { cookie: first.split(";")[0] } }), readProposalPayload(typed), id)).setCookie!;
    expect(setCookie.split(";")[0]).toBe(first.split(";")[0]);
    const cookie = setCookie.split(";")[0];
    const i = cookie.indexOf("=") + 5;
    const forged = cookie.slice(0, i) + (cookie[i] === "A" ? "B" : "A") + cookie.slice(i + 1);
    const someoneElse = await restoreStash(new Request("http://bandledger.test/proposals/restore", { headers: { cookie: forged } }), who.mei);
    expect(someoneElse.proposalId).toBeNull();
    const back = await restoreStash(new Request("http://bandledger.test/proposals/restore", { headers: { cookie } }), who.tomas);
    expect(back.proposalId).toBe(id);
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, id));
    expect(row.payload).toMatchObject({ value: "1.42247", notes: "typed while the session ran out" });
    expect((await restoreStash(new Request("http://bandledger.test/proposals/restore", { headers: { cookie } }), who.tomas)).proposalId).toBeNull();
  });

  it("becomes a new draft of whoever signs in when it was not theirs", async () => {
    const id = await createDraft(who.tomas, gapRevision(recordIds.gaasGap300, ""));
    const setCookie = (await stashPayload(new Request("http://bandledger.test/proposals/new"), readProposalPayload(gapRevision(recordIds.gaasGap300, "1.42246")), id)).setCookie!;
    const back = await restoreStash(new Request("http://bandledger.test/", { headers: { cookie: setCookie.split(";")[0] } }), who.mei);
    expect(back.proposalId).not.toBe(id);
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, back.proposalId!));
    expect(row).toMatchObject({ authorId: who.mei.id, state: "draft", payload: expect.objectContaining({ value: "1.42246" }) });
  });

  it(`is kept at most ${STASHES_PER_ADDRESS} times per client address within the hour, and never past ${MAX_STASHES} in all`, async () => {
    const payload = readProposalPayload(gapRevision(recordIds.gaasGap300, "1.4"));
    const post = (address: string) => runWithPeerAddress(address, () => stashPayload(new Request("http://bandledger.test/proposals/new", { method: "POST" }), payload, null));
    const stashed = async () => Number((await t.db.select({ n: sql<number>`COUNT(*)` }).from(draftStashes))[0].n);
    const before = await stashed();
    for (let i = 0; i < STASHES_PER_ADDRESS; i++) expect((await post("198.51.100.23")).kept).toBe(true);
    expect(await post("198.51.100.23")).toEqual({ kept: false, setCookie: null });
    expect(await stashed()).toBe(before + STASHES_PER_ADDRESS);
    expect((await post("198.51.100.24")).kept).toBe(true);

    // Fill the table to its cap from many addresses: the next anonymous post keeps nothing, whoever sends it.
    const room = MAX_STASHES - (await stashed());
    await t.pool.query(
      "INSERT INTO draft_stashes (id, proposal_id, payload, ip, expires_at) SELECT SHA2(CONCAT('filler', seq), 256), NULL, '{}', CONCAT('203.0.113.', seq % 250), NOW(3) + INTERVAL 1 HOUR FROM seq_1_to_100000 LIMIT ?",
      [room],
    );
    expect(await stashed()).toBe(MAX_STASHES);
    expect((await post("192.0.2.200")).kept).toBe(false);
    expect(await stashed()).toBe(MAX_STASHES);
    await t.pool.query("DELETE FROM draft_stashes WHERE ip LIKE '203.0.113.%'");
  });
});

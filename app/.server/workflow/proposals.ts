import { and, eq, inArray, sql } from "drizzle-orm";
import { materialOf, quantityOf, readProposalPayload, validateProposal, type ProposalKind, type ProposalPayload } from "~/domain/proposal-schemas";
import { audit } from "../audit";
import { proposalCheckStatus } from "../checks/report";
import { db } from "../db/client";
import { familyLeads, materials, proposalComments, proposals, quantities, records, users } from "../db/schema";
import { hasRole, type CurrentUser } from "../permissions";
import { parseBibtexEntry } from "../registry/bibtex";
import type { Executor, Tx } from "../registry/executor";
import { loadProposalCatalogue } from "./catalogue";
import { WorkflowError } from "./errors";
import { loadOneFact, summaryOf, withUnit, type ProposalFacts } from "./facts";
import { carryForwardNotice, remarkNotice, submittedNotice } from "./notice-templates";
import { deliverImmediate, publicLink, queueNotices } from "./notices";

export const proposalPath = (id: number) => `/proposals/${id}`;

type Actor = Pick<CurrentUser, "id" | "email" | "name" | "role" | "leadFamilyIds">;

/** Rows changed by an UPDATE through drizzle's mysql2 driver. */
export function affectedRows(result: unknown): number {
  const header = Array.isArray(result) ? result[0] : result;
  return Number((header as { affectedRows?: number })?.affectedRows ?? 0);
}

async function loadRecordRef(ex: Executor, recordId: number) {
  const [row] = await ex
    .select({
      id: records.id, status: records.status, currentRevisionId: records.currentRevisionId, materialId: records.materialId,
      quantityId: records.quantityId, materialKey: materials.key, quantityKey: quantities.key,
    })
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(eq(records.id, recordId))
    .limit(1);
  return row ?? null;
}

/** Material and quantity ids of a new-record payload, where what was typed names them. */
async function resolveNewRecordIds(ex: Executor, p: ProposalPayload): Promise<{ materialId: number | null; quantityId: number | null }> {
  const catalogue = await loadProposalCatalogue(ex);
  const material = p.material.trim() ? materialOf(catalogue, p.material) : undefined;
  const q = p.quantity.trim() ? quantityOf(catalogue, p.quantity)?.key : undefined;
  const [quantity] = q ? await ex.select({ id: quantities.id }).from(quantities).where(eq(quantities.key, q)).limit(1) : [];
  return { materialId: material?.id ?? null, quantityId: quantity?.id ?? null };
}

/**
 * Starts a draft: a new record, or a new value or a retirement of an existing record (which fixes the record
 * and the revision the change is based on). Whatever was typed is kept, valid or not.
 */
export async function createDraft(actor: Actor, raw: unknown, request: Request | null = null): Promise<number> {
  if (!hasRole(actor, "contributor")) throw new WorkflowError("forbidden", "Proposing needs the contributor role.");
  const payload = readProposalPayload(raw);
  let recordId: number | null = null;
  let baseRevisionId: number | null = null;
  let materialId: number | null = null;
  let quantityId: number | null = null;
  if (payload.kind !== "new_record") {
    const record = /^\d{1,10}$/.test(payload.recordId.trim()) ? await loadRecordRef(db(), Number(payload.recordId.trim())) : null;
    if (!record) throw new WorkflowError("invalid", "Choose the record this proposal changes.", { fieldErrors: { recordId: "There is no such record." } });
    if (payload.kind === "retirement" && record.status === "retired") {
      throw new WorkflowError("invalid", "This record is already retired.", { fieldErrors: { recordId: "This record is already retired." } });
    }
    recordId = record.id;
    baseRevisionId = record.currentRevisionId;
    materialId = record.materialId;
    quantityId = record.quantityId;
    payload.recordId = String(record.id);
    payload.material = record.materialKey;
    payload.quantity = record.quantityKey;
  } else {
    ({ materialId, quantityId } = await resolveNewRecordIds(db(), payload));
  }
  const [{ id }] = await db()
    .insert(proposals)
    .values({ kind: payload.kind, state: "draft", authorId: actor.id, recordId, baseRevisionId, materialId, quantityId, payload })
    .$returningId();
  await audit(actor, "proposal.create", { type: "proposal", id }, request, { kind: payload.kind, recordId });
  return id;
}

async function ownDraft(ex: Executor, actor: Actor, id: number) {
  const [row] = await ex.select().from(proposals).where(eq(proposals.id, id)).limit(1);
  if (!row || (row.authorId !== actor.id && row.state === "draft")) throw new WorkflowError("not_found", "There is no such proposal.");
  if (row.authorId !== actor.id) throw new WorkflowError("forbidden", "Only the author edits a proposal.");
  if (row.state !== "draft") throw new WorkflowError("state", `This proposal is ${row.state}; only a draft can be edited.`);
  return row;
}

/** Keeps what was typed in the author's draft; the record, the base and the kind stay as the draft started. */
export async function saveDraft(actor: Actor, id: number, raw: unknown): Promise<{ savedAt: Date; payload: ProposalPayload }> {
  const row = await ownDraft(db(), actor, id);
  const payload = readProposalPayload(raw);
  payload.kind = row.kind;
  let ids: { materialId: number | null; quantityId: number | null } = { materialId: row.materialId, quantityId: row.quantityId };
  if (row.kind !== "new_record") {
    const stored = readProposalPayload(row.payload);
    payload.recordId = stored.recordId;
    payload.material = stored.material;
    payload.quantity = stored.quantity;
  } else {
    ids = await resolveNewRecordIds(db(), payload);
  }
  const savedAt = new Date();
  await db().update(proposals).set({ payload, ...ids, updatedAt: savedAt }).where(and(eq(proposals.id, id), eq(proposals.state, "draft")));
  return { savedAt, payload };
}

/** When the author's draft was last saved, or null when it is not (or no longer) their draft. */
export async function draftSavedAt(actor: Actor, id: number): Promise<Date | null> {
  const [row] = await db()
    .select({ updatedAt: proposals.updatedAt })
    .from(proposals)
    .where(and(eq(proposals.id, id), eq(proposals.authorId, actor.id), eq(proposals.state, "draft")))
    .limit(1);
  return row?.updatedAt ?? null;
}

/** The leads a submitted proposal goes to: every lead of its family but its author; admins when no one else leads it. */
export async function reviewersOf(ex: Executor, familyId: number, authorId: number): Promise<number[]> {
  const leads = await ex
    .select({ id: users.id })
    .from(familyLeads)
    .innerJoin(users, eq(users.id, familyLeads.userId))
    .where(and(eq(familyLeads.familyId, familyId), eq(users.active, true), inArray(users.role, ["lead", "admin"])));
  const others = leads.map((l) => l.id).filter((id) => id !== authorId);
  if (others.length) return others;
  const admins = await ex.select({ id: users.id }).from(users).where(and(eq(users.role, "admin"), eq(users.active, true)));
  return admins.map((a) => a.id).filter((id) => id !== authorId);
}

/** What the browser cannot check: the BibTeX entry parses, the record still stands as the proposal was based on it. */
async function serverChecks(ex: Executor, facts: ProposalFacts, payload: ProposalPayload): Promise<void> {
  const fieldErrors: Record<string, string> = {};
  if (payload.source.kind === "bibtex" && payload.source.bibtex.trim() !== "") {
    const parsed = parseBibtexEntry(payload.source.bibtex);
    if (!parsed.ok) fieldErrors["source.bibtex"] = parsed.message;
  }
  if (facts.row.kind === "new_record" && facts.existingRecordId !== null) {
    fieldErrors.material = `${facts.material?.key} already has a record of “${facts.quantity?.name}” under these conditions (record ${facts.existingRecordId}): propose a new value for that record instead.`;
  }
  if (Object.keys(fieldErrors).length) throw new WorkflowError("invalid", "The proposal has errors.", { fieldErrors });
  if (facts.row.kind !== "new_record") {
    if (!facts.record) throw new WorkflowError("invalid", "The record of this proposal no longer exists.");
    if (facts.row.kind === "retirement" && facts.record.status === "retired") throw new WorkflowError("stale", "This record has been retired meanwhile; withdraw this proposal.");
    if (facts.stale) throw staleError(facts);
  }
}

export function staleError(facts: ProposalFacts): WorkflowError {
  if (facts.row.kind === "new_record") {
    return new WorkflowError("stale", `A record under these conditions was created since this proposal was written (record ${facts.existingRecordId}); its author must carry the proposal forward onto it.`, {
      recordId: facts.existingRecordId ?? undefined,
    });
  }
  const now = facts.currentValue?.kind === "retirement" ? "retired" : `${facts.currentValue?.value ?? "—"} ${facts.quantity?.canonicalUnit ?? ""}`.trim();
  return new WorkflowError("stale", `The record has changed since this proposal was based on it: its current value is now ${now} (revision ${facts.record?.currentRevisionId}). Its author must carry it forward to the current value first.`, {
    recordId: facts.record?.id,
    currentRevisionId: facts.record?.currentRevisionId ?? null,
  });
}

/**
 * Submits the author's draft for review. What was posted is saved first, so a refused submission never loses
 * it; then the proposal is checked (fields, source, record), marked submitted, and the family's leads are noticed.
 */
export async function submitProposal(actor: Actor, id: number, raw: unknown, request: Request | null = null): Promise<void> {
  const { payload } = await saveDraft(actor, id, raw);
  const catalogue = await loadProposalCatalogue();
  const check = validateProposal(payload, catalogue);
  if (!check.ok) throw new WorkflowError("invalid", "The proposal has errors.", { fieldErrors: check.errors });
  const facts = await loadOneFact(db(), id);
  if (!facts) throw new WorkflowError("not_found", "There is no such proposal.");
  await serverChecks(db(), facts, payload);
  const prepared = check.proposal.prepared;
  // The queue shows this at a glance; the review page recomputes the full report from current values.
  const checkStatus = await proposalCheckStatus(payload);
  const noticeIds = await db().transaction(async (tx) => {
    const result = await tx
      .update(proposals)
      .set({
        state: "submitted",
        submittedAt: sql`NOW(3)`,
        version: sql`${proposals.version} + 1`,
        proposedValue: prepared?.value ?? null,
        proposedUnit: prepared ? check.proposal.quantity.canonicalUnit : null,
        checkStatus,
        materialId: check.proposal.material.id,
        quantityId: facts.quantity?.id ?? facts.row.quantityId,
        updatedAt: sql`NOW(3)`,
      })
      .where(and(eq(proposals.id, id), eq(proposals.state, "draft"), eq(proposals.authorId, actor.id)));
    if (affectedRows(result) === 0) throw new WorkflowError("state", "This proposal is no longer a draft.");
    const submitted = await loadOneFact(tx, id);
    const reviewers = await reviewersOf(tx, check.proposal.material.familyId, actor.id);
    return queueNotices(tx, reviewers, submittedNotice(summaryOf(submitted!), actor.name, publicLink(proposalPath(id))));
  });
  await audit(actor, "proposal.submit", { type: "proposal", id }, request, { kind: facts.row.kind, recordId: facts.row.recordId, value: prepared?.value ?? null });
  await deliverImmediate(noticeIds);
}

async function ownOpenProposal(ex: Executor, actor: Actor, id: number) {
  const [row] = await ex.select().from(proposals).where(eq(proposals.id, id)).limit(1);
  if (!row) throw new WorkflowError("not_found", "There is no such proposal.");
  if (row.authorId !== actor.id) throw new WorkflowError("forbidden", "Only the author may do this.");
  if (row.state !== "draft" && row.state !== "submitted") throw new WorkflowError("state", `This proposal is already ${row.state}.`);
  return row;
}

/** The author takes back a draft or a submitted proposal; a decided one stays as it was decided. */
export async function withdrawProposal(actor: Actor, id: number, request: Request | null = null): Promise<void> {
  const row = await ownOpenProposal(db(), actor, id);
  const result = await db()
    .update(proposals)
    .set({ state: "withdrawn", version: sql`${proposals.version} + 1`, updatedAt: sql`NOW(3)` })
    .where(and(eq(proposals.id, id), eq(proposals.authorId, actor.id), inArray(proposals.state, ["draft", "submitted"])));
  if (affectedRows(result) === 0) {
    const [now] = await db().select({ state: proposals.state }).from(proposals).where(eq(proposals.id, id));
    throw new WorkflowError("state", `This proposal was ${now?.state ?? "changed"} meanwhile; it can no longer be withdrawn.`);
  }
  await audit(actor, "proposal.withdraw", { type: "proposal", id }, request, { from: row.state });
}

/**
 * The author moves a stale proposal onto the record's current revision (a new-record proposal whose record was
 * created meanwhile becomes a new value for it). The version check refuses carrying forward from a page that is out of date.
 */
export async function carryForwardProposal(actor: Actor, id: number, version: number, request: Request | null = null): Promise<{ baseRevisionId: number | null }> {
  await ownOpenProposal(db(), actor, id);
  const facts = await loadOneFact(db(), id);
  if (!facts) throw new WorkflowError("not_found", "There is no such proposal.");
  if (!facts.stale) throw new WorkflowError("state", "This proposal is based on the record's current revision already.");
  let kind: ProposalKind = facts.row.kind;
  let recordId = facts.row.recordId;
  const payload = { ...facts.payload };
  if (kind === "new_record") {
    kind = "revision";
    recordId = facts.existingRecordId;
    payload.kind = "revision";
    payload.recordId = String(recordId);
  }
  const record = recordId !== null ? await loadRecordRef(db(), recordId) : null;
  if (!record) throw new WorkflowError("invalid", "The record of this proposal no longer exists.");
  if (kind === "retirement" && record.status === "retired") throw new WorkflowError("state", "The record has been retired meanwhile; withdraw this proposal.");
  const from = facts.row.baseRevisionId;
  const noticeIds = await db().transaction(async (tx) => {
    const result = await tx
      .update(proposals)
      .set({ kind, recordId, baseRevisionId: record.currentRevisionId, payload, version: sql`${proposals.version} + 1`, updatedAt: sql`NOW(3)` })
      .where(and(eq(proposals.id, id), eq(proposals.version, version), eq(proposals.authorId, actor.id), inArray(proposals.state, ["draft", "submitted"])));
    if (affectedRows(result) === 0) throw new WorkflowError("changed", "The proposal changed since this page was loaded; look at it again before you carry it forward.");
    // A submitted proposal was noticed to the leads it goes to; they hear of the new base the same way (a draft told no one).
    const moved = await loadOneFact(tx, id);
    if (!moved || moved.row.state !== "submitted" || !moved.material) return [];
    const reviewers = await reviewersOf(tx, moved.material.familyId, moved.row.authorId);
    return queueNotices(tx, reviewers, carryForwardNotice(summaryOf(moved), actor.name, baseText(facts), baseText(moved), publicLink(proposalPath(id))));
  });
  await audit(actor, "proposal.carry_forward", { type: "proposal", id }, request, { fromRevisionId: from, toRevisionId: record.currentRevisionId, recordId });
  await deliverImmediate(noticeIds);
  return { baseRevisionId: record.currentRevisionId };
}

// The value a proposal is based on, as a notice states it: "1.4225 eV", "retired", or "no value" for a new record.
function baseText(f: ProposalFacts): string {
  if (!f.baseValue) return "no value (a new record)";
  return f.baseValue.kind === "retirement" ? "the retirement of the record" : withUnit(f.baseValue.value, f.quantity?.canonicalUnit);
}

/** Whether a person takes part in a proposal: its author, a lead of its family, an admin, or a commenter. */
export async function isInvolved(ex: Executor, actor: Actor, facts: ProposalFacts): Promise<boolean> {
  if (facts.row.authorId === actor.id) return true;
  if (facts.row.state === "draft") return false;
  if (actor.role === "admin") return true;
  if (facts.material && actor.role === "lead" && actor.leadFamilyIds.includes(facts.material.familyId)) return true;
  const [c] = await ex.select({ id: proposalComments.id }).from(proposalComments).where(and(eq(proposalComments.proposalId, facts.row.id), eq(proposalComments.authorId, actor.id))).limit(1);
  return Boolean(c);
}

/** The people in a proposal's thread: its author, everyone who added a remark, and whoever decided it. */
async function threadPeople(ex: Executor, row: { id: number; authorId: number; decidedBy: number | null }): Promise<number[]> {
  const commenters = await ex.selectDistinct({ id: proposalComments.authorId }).from(proposalComments).where(eq(proposalComments.proposalId, row.id));
  return [row.authorId, ...commenters.map((c) => c.id), ...(row.decidedBy ? [row.decidedBy] : [])];
}

/** A comment in the proposal's thread, noticed to the others in it. */
export async function addComment(actor: Actor, id: number, body: string, request: Request | null = null): Promise<number> {
  const text = body.trim();
  if (!text) throw new WorkflowError("invalid", "Write a remark first.", { fieldErrors: { body: "Write a remark first." } });
  if (text.length > 4000) throw new WorkflowError("invalid", "A remark has at most 4000 characters.", { fieldErrors: { body: "A remark has at most 4000 characters." } });
  const facts = await loadOneFact(db(), id);
  if (!facts || !(await isInvolved(db(), actor, facts))) throw new WorkflowError("not_found", "There is no such proposal.");
  if (!hasRole(actor, "contributor")) throw new WorkflowError("forbidden", "Commenting needs the contributor role.");
  const { commentId, noticeIds } = await db().transaction(async (tx: Tx) => {
    const people = (await threadPeople(tx, facts.row)).filter((p) => p !== actor.id);
    const [{ id: commentId }] = await tx.insert(proposalComments).values({ proposalId: id, authorId: actor.id, body: text }).$returningId();
    const noticeIds = await queueNotices(tx, people, remarkNotice(summaryOf(facts), actor.name, text, publicLink(proposalPath(id))));
    return { commentId, noticeIds };
  });
  await audit(actor, "proposal.remark", { type: "proposal", id }, request, { commentId });
  await deliverImmediate(noticeIds);
  return commentId;
}

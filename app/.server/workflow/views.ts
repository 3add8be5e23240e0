import { and, asc, desc, eq, inArray } from "drizzle-orm";
import { shortSourceLabel, formatCslReference } from "~/domain/citations";
import { conditionsLabel, emptyPayload, validateProposal, type ProposalPayload, type ReviewQueueRow } from "~/domain/proposal-schemas";
import { METHOD_KEYS, type Method } from "~/domain/registry-schemas";
import type { RevisionView, SourceRef } from "~/domain/revision-view";
import { db } from "../db/client";
import { attachments, materials, proposalComments, proposals, users } from "../db/schema";
import { hasRole, type CurrentUser } from "../permissions";
import { parseBibtexEntry } from "../registry/bibtex";
import { loadRecord } from "../registry/record-page";
import { loadProposalCatalogue } from "./catalogue";
import { ownProposalMessage } from "./decide";
import { WorkflowError } from "./errors";
import { loadFacts, loadOneFact, summaryOf, withUnit, type ProposalFacts } from "./facts";
import { checkReportForProposal } from "../checks/report";
import { isInvolved } from "./proposals";

type Actor = Pick<CurrentUser, "id" | "email" | "name" | "role" | "leadFamilyIds">;

/** The source as typed in a proposal, described the way the registry describes stored ones. */
function sourceOfPayload(p: ProposalPayload): SourceRef | null {
  const s = p.source;
  if (s.kind === "bibtex") {
    if (!s.bibtex.trim()) return null;
    const parsed = parseBibtexEntry(s.bibtex);
    if (!parsed.ok) return { id: null, kind: "bibtex", label: "BibTeX entry (unreadable)", title: parsed.message, reference: "", doi: null, reportNumber: null };
    const e = parsed.entry;
    return { id: null, kind: "bibtex", label: shortSourceLabel({ kind: "bibtex", title: e.title, authors: e.authors, year: e.year, doi: e.doi, reportNumber: null }), title: e.title, reference: formatCslReference(e.csl), doi: e.doi, reportNumber: null };
  }
  const id = (s.kind === "doi" ? s.doi : s.reportNumber).trim();
  if (!id && !s.title.trim()) return null;
  const year = Number.parseInt(s.year, 10);
  const summary = { kind: s.kind, title: s.title.trim() || id, authors: s.authors.trim() || null, year: Number.isFinite(year) ? year : null, doi: s.kind === "doi" ? id : null, reportNumber: s.kind === "report" ? id : null };
  return {
    id: null, kind: s.kind, label: shortSourceLabel(summary), title: summary.title, reference: [summary.authors, summary.year ? `(${summary.year})` : null].filter(Boolean).join(" "),
    doi: summary.doi, reportNumber: summary.reportNumber,
  };
}

const methodOf = (text: string): Method | null => ((METHOD_KEYS as readonly string[]).includes(text) ? (text as Method) : null);

/** The revision a proposal would add, as the registry will show it once approved. */
async function proposedRevision(f: ProposalFacts): Promise<RevisionView> {
  const p = f.payload;
  const unit = f.quantity?.canonicalUnit ?? "";
  const check = validateProposal(p, await loadProposalCatalogue());
  const prepared = check.ok ? check.proposal.prepared : null;
  const retirement = f.row.kind === "retirement";
  return {
    id: f.row.resultRevisionId, recordId: f.record?.id ?? null, seq: null, kind: retirement ? "retirement" : "value", state: "proposed",
    value: retirement ? null : prepared?.value ?? f.row.proposedValue ?? (p.value.trim() || null),
    unit: prepared || retirement ? unit : p.unit,
    inputValue: p.value.trim() || null, inputUnit: p.unit.trim() || null, significantDigits: prepared?.significantDigits ?? null,
    uncertainty: prepared?.uncertainty ?? (p.uncertainty.trim() || null), method: methodOf(p.method), source: sourceOfPayload(p),
    locator: p.locator.trim() || null, notes: retirement ? p.reason.trim() || null : p.notes.trim() || null,
    potentialCoefficients: prepared?.potentialCoefficients ?? null, periodAngstrom: prepared?.periodAngstrom ?? null,
    validFromK: prepared?.validFromK ?? null, validToK: prepared?.validToK ?? null,
    proposedBy: f.authorName, approvedBy: f.deciderName && f.row.state === "approved" ? f.deciderName : null,
    proposedAt: f.row.submittedAt?.toISOString() ?? null, approvedAt: f.row.state === "approved" ? f.row.decidedAt?.toISOString() ?? null : null,
    proposalId: f.row.id,
  };
}

export type ProposalPageData = Awaited<ReturnType<typeof loadProposalPage>>;

/**
 * Everything the proposal page shows: both revisions side by side with their provenance, the thread, the
 * attachments, and what this person may do. Only the people involved see it (others get "not found").
 */
export async function loadProposalPage(actor: Actor, id: number) {
  const f = await loadOneFact(db(), id);
  if (!f || !(await isInvolved(db(), actor, f))) throw new WorkflowError("not_found", "There is no such proposal.");
  const unit = f.quantity?.canonicalUnit ?? "";
  const recordPage = f.record ? await loadRecord(db(), f.record.id) : null;
  const history = recordPage?.record.revisions ?? [];
  const currentRevision = history.find((r) => r.id === f.record?.currentRevisionId) ?? null;
  const baseRevision = history.find((r) => r.id === f.row.baseRevisionId) ?? null;
  const [comments, files] = await Promise.all([
    db()
      .select({ id: proposalComments.id, body: proposalComments.body, createdAt: proposalComments.createdAt, authorId: proposalComments.authorId, authorName: users.name })
      .from(proposalComments)
      .innerJoin(users, eq(users.id, proposalComments.authorId))
      .where(eq(proposalComments.proposalId, id))
      .orderBy(asc(proposalComments.createdAt), asc(proposalComments.id)),
    db().select().from(attachments).where(eq(attachments.proposalId, id)).orderBy(asc(attachments.id)),
  ]);
  const author = f.row.authorId === actor.id;
  const open = f.row.state === "draft" || f.row.state === "submitted";
  const familyLead = actor.role === "admin" || (actor.role === "lead" && f.material !== null && actor.leadFamilyIds.includes(f.material.familyId));
  let decideBlocked: string | null = null;
  if (f.row.state !== "submitted") decideBlocked = f.row.state === "draft" ? "This is a draft; it is decided once its author submits it." : null;
  else if (author) decideBlocked = ownProposalMessage(actor, f.material ? { id: f.material.familyId, name: f.material.familyName } : null);
  else if (!familyLead) decideBlocked = `Only a lead of ${f.material?.familyName ?? "its family"} or an admin decides this proposal.`;
  const summary = summaryOf(f);
  // A stale new-record proposal is compared with the record that now exists.
  const existing = f.existingRecordId !== null ? await loadRecord(db(), f.existingRecordId) : null;
  const existingCurrent = existing?.record.revisions.find((r) => r.id === existing.record.currentRevisionId) ?? null;
  const current = currentRevision ?? existingCurrent;
  // Once approved, the proposal's own revision is the current one: it is shown beside the revision it replaced.
  const approved = f.row.state === "approved";
  const beside = approved ? baseRevision : current;
  return {
    id: f.row.id,
    kind: f.row.kind,
    state: f.row.state,
    version: f.row.version,
    title: summary.title,
    change: summary.change,
    material: f.material ? { key: f.material.key, name: f.material.name, familyName: f.material.familyName } : null,
    quantity: f.quantity ? { key: f.quantity.key, name: f.quantity.name, symbol: f.quantity.symbol, unit } : null,
    conditions: f.conditionsLabel,
    recordId: f.record?.id ?? f.existingRecordId,
    authorName: f.authorName,
    deciderName: f.deciderName,
    reason: f.row.reason,
    createdAt: f.row.createdAt.toISOString(),
    submittedAt: f.row.submittedAt?.toISOString() ?? null,
    decidedAt: f.row.decidedAt?.toISOString() ?? null,
    resultRevisionId: f.row.resultRevisionId,
    batchId: f.row.batchId,
    current: beside,
    currentRole: approved ? ("replaced" as const) : ("current" as const),
    base: !approved && baseRevision && baseRevision.id !== current?.id ? baseRevision : null,
    proposed: await proposedRevision(f),
    stale: f.stale
      ? {
          currentRevisionId: current?.id ?? null,
          currentText: current ? (current.kind === "retirement" ? "retired" : withUnit(current.value, unit)) : "—",
          baseText: baseRevision ? withUnit(baseRevision.value, unit) : f.row.kind === "new_record" ? "no record yet" : "—",
        }
      : null,
    comments: comments.map((c) => ({ id: c.id, body: c.body, authorName: c.authorName, own: c.authorId === actor.id, createdAt: c.createdAt.toISOString() })),
    attachments: files.map((a) => ({ id: a.id, fileName: a.fileName, contentType: a.contentType, sizeBytes: a.sizeBytes })),
    can: {
      decide: decideBlocked === null && f.row.state === "submitted",
      decideBlocked,
      approve: decideBlocked === null && f.row.state === "submitted" && !f.stale,
      withdraw: author && open,
      carryForward: author && open && f.stale,
      edit: author && f.row.state === "draft",
      attach: author && open,
      comment: hasRole(actor, "contributor"),
    },
    // The proposal's value checked against the material's current values, as the reviewer decides on them.
    checkReport: await checkReportForProposal(f.row.id),
  };
}

/** The family a proposal belongs to, for the route's requireLeadOf guard before a decision. */
export async function familyOfProposal(id: number): Promise<number | null> {
  const [row] = await db().select({ familyId: materials.familyId }).from(proposals).innerJoin(materials, eq(materials.id, proposals.materialId)).where(eq(proposals.id, id));
  return row?.familyId ?? null;
}

export type MyProposal = { id: number; state: string; kind: string; title: string; change: string; updatedAt: string; stale: boolean; batchId: number | null };

/** A person's own proposals, newest first. */
export async function listMyProposals(actor: Actor, limit = 200): Promise<MyProposal[]> {
  const ids = await db().select({ id: proposals.id }).from(proposals).where(eq(proposals.authorId, actor.id)).orderBy(desc(proposals.updatedAt), desc(proposals.id)).limit(limit);
  const facts = await loadFacts(db(), ids.map((r) => r.id));
  return facts.map((f) => {
    const s = summaryOf(f);
    return { id: f.row.id, state: f.row.state, kind: f.row.kind, title: s.title, change: s.change, updatedAt: f.row.updatedAt.toISOString(), stale: f.stale, batchId: f.row.batchId };
  });
}

/** The submitted proposals a lead decides: those of the families they lead (an admin sees every family). */
export async function listReviewQueue(actor: Actor): Promise<ReviewQueueRow[]> {
  if (!hasRole(actor, "lead")) throw new WorkflowError("forbidden", "The review queue is for leads.");
  const families = actor.role === "admin" ? null : actor.leadFamilyIds;
  if (families !== null && families.length === 0) return [];
  const where = families === null ? eq(proposals.state, "submitted") : and(eq(proposals.state, "submitted"), inArray(materials.familyId, families));
  const ids = await db().select({ id: proposals.id }).from(proposals).innerJoin(materials, eq(materials.id, proposals.materialId)).where(where).orderBy(asc(proposals.submittedAt)).limit(2000);
  const facts = await loadFacts(db(), ids.map((r) => r.id));
  return facts.map((f) => {
    const unit = f.quantity?.canonicalUnit ?? null;
    return {
      id: f.row.id,
      kind: f.row.kind,
      submittedAt: (f.row.submittedAt ?? f.row.createdAt).toISOString(),
      material: f.material?.key ?? "?",
      familyName: f.material?.familyName ?? "",
      quantity: f.quantity?.name ?? "?",
      conditions: f.conditionsLabel,
      current: f.row.kind === "new_record" ? "new record" : f.currentValue?.kind === "retirement" ? "retired" : withUnit(f.currentValue?.value ?? null, unit),
      proposed: f.row.kind === "retirement" ? "retire" : withUnit(f.row.proposedValue, f.row.proposedUnit),
      author: f.authorName,
      own: f.row.authorId === actor.id,
      stale: f.stale,
      checkStatus: f.row.checkStatus,
    };
  });
}

export type ProposalFormRecord = {
  id: number;
  status: "active" | "retired";
  materialKey: string;
  materialName: string;
  quantityKey: string;
  quantityName: string;
  conditions: string;
  unit: string;
  current: RevisionView | null;
};

async function formRecord(recordId: number): Promise<ProposalFormRecord | null> {
  const page = await loadRecord(db(), recordId);
  if (!page) return null;
  const r = page.record;
  const current = r.revisions.find((x) => x.id === r.currentRevisionId) ?? null;
  return {
    id: r.id, status: r.status, materialKey: page.material.key, materialName: page.material.name, quantityKey: r.quantity.key, quantityName: r.quantity.name,
    conditions: conditionsLabel(r.quantity.key, r), unit: r.quantity.canonicalUnit, current,
  };
}

/**
 * What the proposal form starts from: a new record, a change of a record (?record=&kind=), or the author's
 * saved draft, with the catalogue the browser checks against as the person types.
 */
export async function loadProposalForm(actor: Actor, from: { draftId: number } | { recordId: number | null; kind: "new_record" | "revision" | "retirement" }) {
  const catalogue = await loadProposalCatalogue();
  if ("draftId" in from) {
    const f = await loadOneFact(db(), from.draftId);
    if (!f || f.row.authorId !== actor.id) throw new WorkflowError("not_found", "There is no such draft.");
    if (f.row.state !== "draft") throw new WorkflowError("state", "This proposal is no longer a draft.");
    return {
      catalogue, payload: f.payload, proposalId: f.row.id, kind: f.row.kind, record: f.record ? await formRecord(f.record.id) : null,
      stale: f.stale, version: f.row.version, savedAt: f.row.updatedAt.toISOString(), attachments: (await db().select().from(attachments).where(eq(attachments.proposalId, f.row.id))).map((a) => ({ id: a.id, fileName: a.fileName, sizeBytes: a.sizeBytes })),
    };
  }
  const payload = emptyPayload(from.kind);
  let record: ProposalFormRecord | null = null;
  if (from.kind !== "new_record") {
    record = from.recordId !== null ? await formRecord(from.recordId) : null;
    if (!record) throw new WorkflowError("not_found", "There is no such record.");
    payload.recordId = String(record.id);
    payload.material = record.materialKey;
    payload.quantity = record.quantityKey;
    if (record.current && record.current.kind !== "retirement") payload.unit = record.current.inputUnit ?? record.unit;
  }
  return { catalogue, payload, proposalId: null, kind: from.kind, record, stale: false, version: 0, savedAt: null, attachments: [] as { id: number; fileName: string; sizeBytes: number }[] };
}

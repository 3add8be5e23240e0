import { and, eq, sql } from "drizzle-orm";
import { revisionInputOf, validateProposal } from "~/domain/proposal-schemas";
import { audit } from "../audit";
import { db } from "../db/client";
import { familyLeads, proposals, quantities, users } from "../db/schema";
import type { CurrentUser } from "../permissions";
import { isRegistryError } from "../registry/errors";
import type { Executor, Tx } from "../registry/executor";
import { appendRevision, createRecordWithRevision, retireRecord } from "../registry/records";
import { ensureSource } from "../registry/sources";
import { loadProposalCatalogue } from "./catalogue";
import { WorkflowError } from "./errors";
import { loadOneFact, summaryOf, type ProposalRow } from "./facts";
import { decisionNotice } from "./notice-templates";
import { deliverImmediate, publicLink, queueNotices } from "./notices";
import { affectedRows, proposalPath, staleError } from "./proposals";

type Actor = Pick<CurrentUser, "id" | "email" | "name" | "role" | "leadFamilyIds">;

/** Who decides a proposal in place of its author (four-eyes rule), worded for the author's own role. */
export function ownProposalMessage(author: Pick<CurrentUser, "role" | "leadFamilyIds">, family: { id: number; name: string } | null): string {
  const name = family?.name ?? "the material's family";
  if (author.role === "admin") return `You wrote this proposal: a lead of ${name} or another admin decides it (four-eyes rule).`;
  if (author.role === "lead" && family !== null && author.leadFamilyIds.includes(family.id)) {
    return `You wrote this proposal: another lead of ${name} or an admin decides it (four-eyes rule).`;
  }
  return `You wrote this proposal: a lead of ${name} or an admin decides it, and the decision comes to you by e-mail.`;
}

export type DecisionInput = { decision: "approve" | "reject"; version: number; reason?: string | null };
export type DecisionResult = { state: "approved" | "rejected"; recordId: number | null; resultRevisionId: number | null };

/** The UPDATE matched no row: another transaction changed the proposal first. */
class LostRace extends Error {}

// Deadlock (1213), lock wait timeout (1205), or a snapshot that saw a row change under it (1020): try again.
function isRetryable(e: unknown): boolean {
  for (let x: unknown = e, i = 0; x && i < 4; i++, x = (x as { cause?: unknown }).cause) {
    const errno = (x as { errno?: number }).errno;
    if (errno === 1213 || errno === 1205 || errno === 1020) return true;
  }
  return false;
}

function formatWhen(d: Date | null): string {
  return d ? `${d.toISOString().slice(0, 16).replace("T", " ")} UTC` : "";
}

/**
 * Why a proposal that is no longer submitted cannot be decided, naming who decided it. Inside the transaction it
 * reads through `tx`: a second pool connection per waiting transaction starves the pool under many deciders at once.
 */
async function notDecidableError(ex: Executor, row: Pick<ProposalRow, "id" | "state" | "decidedBy" | "decidedAt">): Promise<WorkflowError> {
  if (row.state === "approved" || row.state === "rejected") {
    const [who] = row.decidedBy ? await ex.select({ name: users.name }).from(users).where(eq(users.id, row.decidedBy)) : [];
    return new WorkflowError("already_decided", `This proposal was already ${row.state} by ${who?.name ?? "another lead"} (${formatWhen(row.decidedAt)}); a decided proposal is not decided again.`);
  }
  if (row.state === "withdrawn") return new WorkflowError("state", "Its author withdrew this proposal; there is nothing to decide.");
  return new WorkflowError("state", "This proposal is a draft; it is decided once its author submits it.");
}

/** Only a lead of the material's family, or an admin, decides; read inside the transaction, as the database has it now. */
async function mayDecide(tx: Tx, actorId: number, familyId: number): Promise<boolean> {
  const [u] = await tx.select({ role: users.role, active: users.active }).from(users).where(eq(users.id, actorId));
  if (!u?.active) return false;
  if (u.role === "admin") return true;
  if (u.role !== "lead") return false;
  const [lead] = await tx.select({ userId: familyLeads.userId }).from(familyLeads).where(and(eq(familyLeads.userId, actorId), eq(familyLeads.familyId, familyId)));
  return Boolean(lead);
}

/**
 * A lead's decision on a submitted proposal, in one transaction: the proposal moves from submitted to its
 * decision by `UPDATE … WHERE id = ? AND version = ? AND state = 'submitted'`, so of many leads deciding at
 * once exactly one matches a row; the others are told who decided. An approval appends the revision and makes
 * it current in the same transaction (the registry refuses a stale base), and the author's notice is written
 * with it, so a lost race leaves neither a revision nor a notice.
 */
export async function decideProposal(actor: Actor, id: number, input: DecisionInput, request: Request | null = null): Promise<DecisionResult> {
  const reason = input.reason?.trim() || null;
  if (input.decision === "reject" && !reason) {
    throw new WorkflowError("invalid", "Say why the proposal is rejected.", { fieldErrors: { reason: "Say why the proposal is rejected; the author reads it." } });
  }
  const catalogue = input.decision === "approve" ? await loadProposalCatalogue() : null;
  for (let attempt = 1; ; attempt++) {
    try {
      const outcome = await db().transaction(async (tx) => {
        const facts = await loadOneFact(tx, id);
        if (!facts) throw new WorkflowError("not_found", "There is no such proposal.");
        const row = facts.row;
        if (row.state !== "submitted") throw await notDecidableError(tx, row);
        if (row.authorId === actor.id) {
          const family = facts.material ? { id: facts.material.familyId, name: facts.material.familyName } : null;
          throw new WorkflowError("own_proposal", ownProposalMessage(actor, family));
        }
        if (!facts.material || !(await mayDecide(tx, actor.id, facts.material.familyId))) {
          throw new WorkflowError("forbidden", `Only a lead of ${facts.material?.familyName ?? "the material's family"} or an admin decides this proposal.`);
        }
        if (row.version !== input.version) throw new WorkflowError("changed", "The proposal changed since you opened it (its author carried it forward or edited it); look at it again before you decide.");
        if (input.decision === "approve" && facts.stale) throw staleError(facts);
        const state = input.decision === "approve" ? "approved" : "rejected";
        const won = await tx
          .update(proposals)
          .set({ state, decidedBy: actor.id, decidedAt: sql`NOW(3)`, reason, version: sql`${proposals.version} + 1`, updatedAt: sql`NOW(3)` })
          .where(and(eq(proposals.id, id), eq(proposals.version, input.version), eq(proposals.state, "submitted")));
        if (affectedRows(won) === 0) throw new LostRace();
        let recordId = row.recordId;
        let resultRevisionId: number | null = null;
        if (input.decision === "approve") {
          ({ recordId, resultRevisionId } = await applyApproval(tx, row, actor.id, catalogue!, facts.record?.status === "retired"));
          await tx.update(proposals).set({ recordId, resultRevisionId }).where(eq(proposals.id, id));
        }
        const noticeIds = await queueNotices(tx, [row.authorId], decisionNotice(summaryOf(facts), state, actor.name, reason, publicLink(proposalPath(id))));
        return { state, recordId, resultRevisionId, noticeIds } as const;
      });
      await audit(actor, outcome.state === "approved" ? "proposal.approve" : "proposal.reject", { type: "proposal", id }, request, {
        recordId: outcome.recordId, revisionId: outcome.resultRevisionId, reason,
      });
      await deliverImmediate(outcome.noticeIds);
      return { state: outcome.state, recordId: outcome.recordId, resultRevisionId: outcome.resultRevisionId };
    } catch (e) {
      if (e instanceof LostRace || isRetryable(e)) {
        const [now] = await db().select().from(proposals).where(eq(proposals.id, id));
        if (!now) throw new WorkflowError("not_found", "There is no such proposal.");
        if (now.state !== "submitted") throw await notDecidableError(db(), now);
        if (now.version !== input.version) throw new WorkflowError("changed", "The proposal changed since you opened it (its author carried it forward); look at it again before you decide.");
        if (attempt < 5) continue;
        throw new WorkflowError("changed", "The proposal is being changed right now; try again in a moment.");
      }
      if (isRegistryError(e, "stale") || isRegistryError(e, "duplicate") || isRegistryError(e, "retired")) {
        const facts = await loadOneFact(db(), id);
        throw facts?.stale ? staleError(facts) : new WorkflowError("stale", e.message);
      }
      if (isRegistryError(e, "invalid") || isRegistryError(e, "four_eyes")) {
        throw new WorkflowError("invalid", `The registry refused the change: ${e.message}`, { fieldErrors: e.details.fieldErrors });
      }
      throw e;
    }
  }
}

async function applyApproval(
  tx: Tx,
  row: ProposalRow,
  approverId: number,
  catalogue: Awaited<ReturnType<typeof loadProposalCatalogue>>,
  recordRetired: boolean,
): Promise<{ recordId: number; resultRevisionId: number }> {
  const check = validateProposal(row.payload, catalogue);
  if (!check.ok) {
    const list = Object.entries(check.errors).map(([field, message]) => `${field}: ${message}`).join("; ");
    throw new WorkflowError("invalid", `The proposal no longer passes the checks (${list}); its author should withdraw it and propose again.`, { fieldErrors: check.errors });
  }
  const p = check.proposal;
  const sourceId = p.source ? await ensureSource(tx, p.source, row.authorId) : null;
  const approval = { proposedBy: row.authorId, approvedBy: approverId, proposedAt: row.submittedAt ?? undefined, proposalId: row.id };
  if (row.kind === "retirement") {
    const done = await retireRecord(tx, { ...approval, recordId: row.recordId!, baseRevisionId: row.baseRevisionId!, reason: p.reason!, sourceId, locator: p.locator });
    return { recordId: done.recordId, resultRevisionId: done.revisionId };
  }
  const revision = revisionInputOf(check.payload, sourceId!);
  if (row.kind === "new_record") {
    const [q] = await tx.select({ id: quantities.id }).from(quantities).where(eq(quantities.key, p.quantity.key));
    const done = await createRecordWithRevision(tx, { ...approval, materialId: p.material.id, quantityId: q.id, conditions: p.conditions!, revision });
    return { recordId: done.recordId, resultRevisionId: done.revisionId };
  }
  const done = await appendRevision(tx, { ...approval, recordId: row.recordId!, baseRevisionId: row.baseRevisionId, revision, reinstate: recordRetired });
  return { recordId: done.recordId, resultRevisionId: done.revisionId };
}

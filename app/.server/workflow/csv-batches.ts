import { and, asc, eq, sql } from "drizzle-orm";
import { checkProposalCsv, previewRowOf, MAX_CSV_BYTES, type CsvPreviewRow } from "~/domain/csv-proposals";
import type { ProposalPayload } from "~/domain/proposal-schemas";
import { audit } from "../audit";
import { db } from "../db/client";
import { attachments, csvBatches, materialFamilies, materials, proposals, quantities, records, revisions, users } from "../db/schema";
import { hasRole, type CurrentUser } from "../permissions";
import { parseBibtexEntry } from "../registry/bibtex";
import { findRecordId } from "../registry/records";
import { storeFile } from "../storage";
import { loadProposalCatalogue } from "./catalogue";
import { WorkflowError } from "./errors";
import { withUnit } from "./facts";
import { batchNotice } from "./notice-templates";
import { deliverImmediate, publicLink, queueNotices } from "./notices";
import { reviewersOf } from "./proposals";

type Actor = Pick<CurrentUser, "id" | "email" | "name" | "role">;

type PlannedRow = {
  row: number;
  payload: ProposalPayload;
  kind: "new_record" | "revision";
  recordId: number | null;
  baseRevisionId: number | null;
  materialId: number;
  quantityId: number;
  familyId: number;
  value: string;
  unit: string;
};

export type CsvServerCheck = {
  ok: boolean;
  fileErrors: string[];
  rows: CsvPreviewRow[];
  errorCount: number;
  delimiter: string;
  hadByteOrderMark: boolean;
  planned: PlannedRow[];
};

/**
 * The server's check of an uploaded proposal CSV: everything the browser checked, again, on the same bytes,
 * plus what needs the database (BibTeX entries, and which rows change an existing record and which make a new one).
 */
export async function checkCsvUpload(bytes: Uint8Array): Promise<CsvServerCheck> {
  const catalogue = await loadProposalCatalogue();
  const check = await checkProposalCsv(bytes, catalogue);
  const rows = check.rows.map(previewRowOf);
  const planned: PlannedRow[] = [];
  if (check.fileErrors.length === 0) {
    const quantityIds = new Map((await db().select({ id: quantities.id, key: quantities.key }).from(quantities)).map((q) => [q.key, q.id]));
    for (const [i, r] of check.rows.entries()) {
      const p = r.proposal;
      if (!p || !p.prepared) continue;
      if (p.source?.kind === "bibtex") {
        const parsed = parseBibtexEntry(p.source.bibtex);
        if (!parsed.ok) {
          rows[i].errors.push({ row: r.row, column: "source", message: parsed.message });
          continue;
        }
      }
      const quantityId = quantityIds.get(p.quantity.key)!;
      const recordId = await findRecordId(db(), { materialId: p.material.id, quantityId, conditionKey: p.conditionKey! });
      let baseRevisionId: number | null = null;
      if (recordId !== null) {
        const [rec] = await db()
          .select({ currentRevisionId: records.currentRevisionId, status: records.status, value: revisions.value })
          .from(records)
          .leftJoin(revisions, eq(revisions.id, records.currentRevisionId))
          .where(eq(records.id, recordId));
        baseRevisionId = rec.currentRevisionId;
        rows[i].target = rec.status === "retired" ? `record ${recordId} (retired)` : `record ${recordId}: ${withUnit(rec.value, p.quantity.canonicalUnit)}`;
      } else rows[i].target = "new record";
      planned.push({
        row: r.row, payload: { ...r.payload, kind: recordId !== null ? "revision" : "new_record", recordId: recordId !== null ? String(recordId) : "" },
        kind: recordId !== null ? "revision" : "new_record", recordId, baseRevisionId, materialId: p.material.id, quantityId, familyId: p.material.familyId,
        value: p.prepared.value, unit: p.quantity.canonicalUnit,
      });
    }
  }
  const errorCount = check.fileErrors.length + rows.reduce((n, r) => n + r.errors.length, 0);
  return { ok: errorCount === 0 && planned.length > 0, fileErrors: check.fileErrors, rows, errorCount, delimiter: check.delimiter, hadByteOrderMark: check.hadByteOrderMark, planned };
}

export type CsvSubmission = { ok: true; batchId: number; proposalIds: number[] } | { ok: false; check: CsvServerCheck };

/**
 * Submits every row of a CSV as a proposal, or none: the rows are checked again, then the batch, the kept file
 * and all its proposals are written in one transaction. The uploaded file is stored content-addressed with the
 * batch for provenance.
 */
export async function submitCsvBatch(actor: Actor, fileName: string, bytes: Uint8Array, request: Request | null = null): Promise<CsvSubmission> {
  if (!hasRole(actor, "contributor")) throw new WorkflowError("forbidden", "Uploading proposals needs the contributor role.");
  const check = await checkCsvUpload(bytes);
  if (!check.ok) return { ok: false, check };
  const stored = await storeFile(bytes, { fileName, allowed: ["csv", "text"], maxBytes: MAX_CSV_BYTES });
  const { batchId, proposalIds, noticeIds } = await db().transaction(async (tx) => {
    const [{ id: batchId }] = await tx.insert(csvBatches).values({ authorId: actor.id, fileName, sha256: stored.sha256, rowCount: check.planned.length }).$returningId();
    await tx.insert(attachments).values({ batchId, sha256: stored.sha256, fileName, contentType: stored.contentType, sizeBytes: stored.sizeBytes, uploadedBy: actor.id });
    for (let i = 0; i < check.planned.length; i += 500) {
      await tx.insert(proposals).values(
        check.planned.slice(i, i + 500).map((r) => ({
          kind: r.kind, state: "submitted" as const, authorId: actor.id, recordId: r.recordId, baseRevisionId: r.baseRevisionId,
          materialId: r.materialId, quantityId: r.quantityId, payload: r.payload, proposedValue: r.value, proposedUnit: r.unit,
          batchId, submittedAt: sql`NOW(3)`,
        })),
      );
    }
    const ids = (await tx.select({ id: proposals.id }).from(proposals).where(eq(proposals.batchId, batchId)).orderBy(asc(proposals.id))).map((r) => r.id);
    const byFamily = new Map<number, number>();
    for (const r of check.planned) byFamily.set(r.familyId, (byFamily.get(r.familyId) ?? 0) + 1);
    const noticeIds: number[] = [];
    for (const [familyId, count] of byFamily) {
      const [family] = await tx.select({ name: materialFamilies.name }).from(materialFamilies).where(eq(materialFamilies.id, familyId));
      const reviewers = await reviewersOf(tx, familyId, actor.id);
      noticeIds.push(...(await queueNotices(tx, reviewers, batchNotice(count, family.name, actor.name, fileName, publicLink(`/uploads/${batchId}`)))));
    }
    return { batchId, proposalIds: ids, noticeIds };
  });
  await audit(actor, "proposal.upload", { type: "csv_batch", id: batchId }, request, { fileName, sha256: stored.sha256, rows: proposalIds.length, proposalIds });
  await deliverImmediate(noticeIds);
  return { ok: true, batchId, proposalIds };
}

/** A batch with its kept file and its proposals, for the author and the leads of the families in it. */
export async function loadBatch(actor: Actor & { leadFamilyIds: number[] }, batchId: number) {
  const [batch] = await db().select({ batch: csvBatches, authorName: users.name }).from(csvBatches).innerJoin(users, eq(users.id, csvBatches.authorId)).where(eq(csvBatches.id, batchId));
  if (!batch) throw new WorkflowError("not_found", "There is no such upload.");
  const rows = await db()
    .select({
      id: proposals.id, state: proposals.state, kind: proposals.kind, proposedValue: proposals.proposedValue, proposedUnit: proposals.proposedUnit,
      material: materials.key, familyId: materials.familyId, quantity: quantities.name,
    })
    .from(proposals)
    .innerJoin(materials, eq(materials.id, proposals.materialId))
    .innerJoin(quantities, eq(quantities.id, proposals.quantityId))
    .where(eq(proposals.batchId, batchId))
    .orderBy(asc(proposals.id));
  const list = rows.map(({ proposedValue, proposedUnit, ...r }) => ({ ...r, proposed: withUnit(proposedValue, proposedUnit) }));
  const mayLead = actor.role === "admin" || (actor.role === "lead" && list.some((p) => actor.leadFamilyIds.includes(p.familyId)));
  if (batch.batch.authorId !== actor.id && !mayLead) throw new WorkflowError("not_found", "There is no such upload.");
  const [file] = await db().select().from(attachments).where(and(eq(attachments.batchId, batchId), eq(attachments.sha256, batch.batch.sha256)));
  return {
    id: batch.batch.id, fileName: batch.batch.fileName, sha256: batch.batch.sha256, rowCount: batch.batch.rowCount, authorName: batch.authorName,
    createdAt: batch.batch.createdAt.toISOString(), sizeBytes: file?.sizeBytes ?? null, proposals: list,
  };
}

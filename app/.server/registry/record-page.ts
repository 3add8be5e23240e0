import { and, eq } from "drizzle-orm";
import { conditionKey, quantityByKey, type Conditions } from "~/domain/quantities";
import type { StoredRevisionView } from "~/domain/revision-view";
import { materials, quantities, records, revisions, sources } from "../db/schema";
import type { Executor } from "./executor";
import { findMaterial, type MaterialDetail } from "./material-page";
import {
  approver, proposer, recordColumns, revisionColumns, revisionsOfRecords, sourceColumns, toRecordSummary, toRevisionView,
  type RecordWithHistory, type RevisionRow,
} from "./revision-rows";

// A record's page, and the current value of one record (what a proposal is based on, what the checks read).

export type RecordPageData = { material: MaterialDetail; record: RecordWithHistory };

/** One record with its material and full history (newest first), or null for an unknown id. */
export async function loadRecord(ex: Executor, id: number): Promise<RecordPageData | null> {
  const [rec] = await ex
    .select({ ...recordColumns, materialKey: materials.key })
    .from(records)
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .innerJoin(materials, eq(materials.id, records.materialId))
    .where(eq(records.id, id))
    .limit(1);
  if (!rec) return null;
  const { materialKey, ...r } = rec;
  const material = await findMaterial(ex, materialKey);
  const history = await revisionsOfRecords(ex, [r.id]);
  return { material: material!, record: { ...toRecordSummary(r), revisions: (history.get(r.id) ?? []).map((rev) => toRevisionView(rev, r, r.quantity.canonicalUnit)) } };
}

/** The revision that holds a record's current value, or null when the record is retired or unknown. */
export async function getCurrentRevision(ex: Executor, recordId: number): Promise<StoredRevisionView | null> {
  const [row] = await ex
    .select({ ...revisionColumns, source: sourceColumns, recordStatus: records.status, currentRevisionId: records.currentRevisionId, unit: quantities.canonicalUnit })
    .from(records)
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .innerJoin(revisions, eq(revisions.id, records.currentRevisionId))
    .leftJoin(sources, eq(sources.id, revisions.sourceId))
    .leftJoin(proposer, eq(proposer.id, revisions.proposedBy))
    .leftJoin(approver, eq(approver.id, revisions.approvedBy))
    .where(and(eq(records.id, recordId), eq(records.status, "active")))
    .limit(1);
  if (!row) return null;
  const { unit, ...revision } = row;
  return toRevisionView(revision as unknown as RevisionRow, { status: row.recordStatus, currentRevisionId: row.currentRevisionId }, unit);
}

/** The current value of one quantity of a material under exact conditions, e.g. GaAs Eg at Γ, 300 K. */
export async function findCurrentValue(
  ex: Executor,
  query: { materialKey: string; quantityKey: string; conditions: Conditions },
): Promise<{ recordId: number; revision: StoredRevisionView } | null> {
  const definition = quantityByKey(query.quantityKey);
  if (!definition) return null;
  const [rec] = await ex
    .select({ id: records.id })
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(and(eq(materials.key, query.materialKey), eq(quantities.key, query.quantityKey), eq(records.conditionKey, conditionKey(definition, query.conditions))))
    .limit(1);
  if (!rec) return null;
  const revision = await getCurrentRevision(ex, rec.id);
  return revision ? { recordId: rec.id, revision } : null;
}


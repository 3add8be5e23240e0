import { and, eq, inArray, sql } from "drizzle-orm";
import { conditionKey, validateConditions, type ConditionInput, type Conditions } from "~/domain/quantities";
import { prepareRevision, type PreparedRevision, type RevisionInput } from "~/domain/registry-schemas";
import { materials, quantities, records, revisions, sources, users } from "../db/schema";
import { definitionOf } from "./catalogue";
import { RegistryError } from "./errors";
import type { Executor, Tx } from "./executor";

export type Approval = {
  /** Who proposed the change and who approved it: two different people (four-eyes rule). */
  proposedBy: number;
  approvedBy: number;
  proposedAt?: Date;
  approvedAt?: Date;
  proposalId?: number | null;
};

export type AppendRevisionInput = Approval & {
  recordId: number;
  /**
   * The revision the change was based on (null: the record has none yet). If the record's current revision is
   * another one, someone changed it first and the call is refused as "stale": nothing is overwritten silently.
   */
  baseRevisionId: number | null;
  /** As typed: the value and uncertainty in any accepted unit, converted exactly here. */
  revision: RevisionInput;
  /** A retired record takes a new value only when this is set, which makes it active again. */
  reinstate?: boolean;
};

export type AppendedRevision = { recordId: number; revisionId: number; seq: number; revision: PreparedRevision };

async function lockRecord(tx: Tx, recordId: number) {
  const [row] = await tx
    .select({ record: records, quantity: quantities })
    .from(records)
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(eq(records.id, recordId))
    .for("update");
  if (!row) throw new RegistryError("not_found", `There is no record ${recordId}.`, { recordId });
  return row;
}

async function checkPeople(tx: Tx, a: Approval) {
  if (a.proposedBy === a.approvedBy) {
    throw new RegistryError("four_eyes", "A change is approved by someone other than the person who proposed it.");
  }
  const found = await tx.select({ id: users.id }).from(users).where(inArray(users.id, [a.proposedBy, a.approvedBy]));
  if (found.length !== 2) throw new RegistryError("invalid", "The proposer or the approver is not a known user.", { fieldErrors: { approvedBy: "Unknown user." } });
}

async function nextSeq(tx: Tx, recordId: number): Promise<number> {
  const [{ last }] = await tx.select({ last: sql<number | null>`MAX(${revisions.seq})` }).from(revisions).where(eq(revisions.recordId, recordId));
  return Number(last ?? 0) + 1;
}

function checkBase(recordId: number, current: number | null, base: number | null) {
  if (current !== base) {
    throw new RegistryError("stale", `Record ${recordId} has changed since this change was based on it; carry it forward to the current revision.`, {
      recordId,
      currentRevisionId: current,
    });
  }
}

/**
 * Appends a value revision to a record and makes it current, inside the caller's transaction (the proposal
 * workflow calls this inside its approval). The record row is locked, so two approvals of the same record queue
 * and the second one sees it as stale.
 */
export async function appendRevision(tx: Tx, input: AppendRevisionInput): Promise<AppendedRevision> {
  const { record, quantity } = await lockRecord(tx, input.recordId);
  checkBase(record.id, record.currentRevisionId, input.baseRevisionId);
  if (record.status === "retired" && !input.reinstate) {
    throw new RegistryError("retired", `Record ${record.id} is retired; a new value would reinstate it.`, { recordId: record.id });
  }
  const definition = definitionOf(quantity);
  if (!definition) throw new RegistryError("invalid", `The quantity ${quantity.key} is not in the catalogue.`);
  const prepared = prepareRevision(definition, input.revision);
  if (!prepared.ok) {
    throw new RegistryError("invalid", "The revision has errors.", { fieldErrors: prepared.errors as Record<string, string> });
  }
  await requireSource(tx, prepared.revision.sourceId);
  await checkPeople(tx, input);
  const { id, seq } = await writeCurrentRevision(tx, record.id, input, { kind: "value", ...prepared.revision }, {
    status: "active",
    currentMethod: prepared.revision.method,
    currentValueNumeric: prepared.revision.valueNumeric,
    currentSourceId: prepared.revision.sourceId,
  });
  return { recordId: record.id, revisionId: id, seq, revision: prepared.revision };
}

export type CreateRecordInput = Approval & {
  materialId: number;
  quantityId: number;
  conditions: ConditionInput;
  revision: RevisionInput;
};

/**
 * Creates a record (one quantity of one material under its conditions) with its first revision. A record with
 * the same conditions is refused as "duplicate" with its id, so a proposal can become a revision of it instead.
 */
export async function createRecordWithRevision(tx: Tx, input: CreateRecordInput): Promise<AppendedRevision> {
  const [material] = await tx.select().from(materials).where(eq(materials.id, input.materialId));
  if (!material) throw new RegistryError("invalid", "The material does not exist.", { fieldErrors: { materialId: "Choose a material." } });
  const [quantity] = await tx.select().from(quantities).where(eq(quantities.id, input.quantityId));
  const definition = quantity ? definitionOf(quantity) : null;
  if (!quantity || !definition) throw new RegistryError("invalid", "The quantity does not exist.", { fieldErrors: { quantityId: "Choose a quantity." } });
  const checked = validateConditions(definition, material.kind, input.conditions);
  if (!checked.ok) throw new RegistryError("invalid", "The conditions of the record have errors.", { fieldErrors: checked.errors as Record<string, string> });
  const key = conditionKey(definition, checked.conditions);
  const existing = await findRecordId(tx, { materialId: material.id, quantityId: quantity.id, conditionKey: key });
  if (existing !== null) {
    throw new RegistryError("duplicate", `${material.name} already has a record of ${definition.name.toLowerCase()} under these conditions.`, { recordId: existing });
  }
  let id: number;
  try {
    [{ id }] = await tx
      .insert(records)
      .values({
        materialId: material.id,
        quantityId: quantity.id,
        temperatureK: checked.conditions.temperatureK,
        valley: checked.conditions.valley,
        composition: checked.conditions.composition,
        conditionKey: key,
        familyId: material.familyId,
        sortMaterial: material.key,
        quantitySort: quantity.sortOrder,
      })
      .$returningId();
  } catch (e) {
    // Another transaction created the same record between our look-up and our insert.
    if (isDuplicateKey(e)) throw new RegistryError("duplicate", `${material.name} already has a record of ${definition.name.toLowerCase()} under these conditions.`);
    throw e;
  }
  return appendRevision(tx, { ...input, recordId: id, baseRevisionId: null });
}

export type RetireRecordInput = Approval & {
  recordId: number;
  baseRevisionId: number;
  /** Why the record is retired; kept as the retirement revision's notes. */
  reason: string;
  sourceId?: number | null;
  locator?: string | null;
};

/** Retires a record: appends a retirement revision (who, when, why) and marks the record retired. */
export async function retireRecord(tx: Tx, input: RetireRecordInput): Promise<{ recordId: number; revisionId: number; seq: number }> {
  const { record } = await lockRecord(tx, input.recordId);
  checkBase(record.id, record.currentRevisionId, input.baseRevisionId);
  if (record.status === "retired") throw new RegistryError("retired", `Record ${record.id} is already retired.`, { recordId: record.id });
  const reason = input.reason.trim();
  if (!reason) throw new RegistryError("invalid", "State why the record is retired.", { fieldErrors: { reason: "State why the record is retired." } });
  if (input.sourceId) await requireSource(tx, input.sourceId);
  await checkPeople(tx, input);
  const { id, seq } = await writeCurrentRevision(
    tx, record.id, input,
    { kind: "retirement", notes: reason.slice(0, 4000), sourceId: input.sourceId ?? null, locator: input.locator ?? null },
    { status: "retired", currentMethod: null, currentValueNumeric: null, currentSourceId: input.sourceId ?? null },
  );
  return { recordId: record.id, revisionId: id, seq };
}

async function requireSource(tx: Tx, sourceId: number): Promise<void> {
  const [source] = await tx.select({ id: sources.id }).from(sources).where(eq(sources.id, sourceId));
  if (!source) throw new RegistryError("invalid", "The source does not exist.", { fieldErrors: { sourceId: "Choose an existing source." } });
}

type RevisionBody = Omit<typeof revisions.$inferInsert, "id" | "recordId" | "seq" | "proposedBy" | "approvedBy" | "proposalId" | "proposedAt" | "approvedAt">;
type ListingCopies = Pick<typeof records.$inferInsert, "status" | "currentMethod" | "currentValueNumeric" | "currentSourceId">;

// The one place a revision becomes current: the record's pointer, version and listing copies change together.
async function writeCurrentRevision(tx: Tx, recordId: number, approval: Approval, body: RevisionBody, copies: ListingCopies): Promise<{ id: number; seq: number }> {
  const seq = await nextSeq(tx, recordId);
  const approvedAt = approval.approvedAt ?? new Date();
  const [{ id }] = await tx
    .insert(revisions)
    .values({
      ...body,
      recordId,
      seq,
      proposedBy: approval.proposedBy,
      approvedBy: approval.approvedBy,
      proposalId: approval.proposalId ?? null,
      proposedAt: approval.proposedAt ?? approvedAt,
      approvedAt,
    })
    .$returningId();
  await tx
    .update(records)
    .set({ ...copies, currentRevisionId: id, version: sql`${records.version} + 1`, updatedAt: approvedAt })
    .where(eq(records.id, recordId));
  return { id, seq };
}

export function isDuplicateKey(e: unknown): boolean {
  for (let x: unknown = e, i = 0; x && i < 4; i++, x = (x as { cause?: unknown }).cause) {
    if ((x as { code?: string }).code === "ER_DUP_ENTRY") return true;
  }
  return false;
}

/** Renews the copies of a material's family and key on its records; call it after changing either. */
export async function refreshMaterialCopies(ex: Executor, materialId: number): Promise<void> {
  await ex.execute(sql`UPDATE ${records} r JOIN ${materials} m ON m.id = r.material_id SET r.family_id = m.family_id, r.sort_material = m.\`key\` WHERE r.material_id = ${materialId}`);
}

/** The record kept for these natural keys, or null. */
export async function findRecordId(ex: Executor, key: { materialId: number; quantityId: number; conditionKey: string }): Promise<number | null> {
  const [row] = await ex
    .select({ id: records.id })
    .from(records)
    .where(and(eq(records.materialId, key.materialId), eq(records.quantityId, key.quantityId), eq(records.conditionKey, key.conditionKey)))
    .limit(1);
  return row?.id ?? null;
}

export type { Conditions };

import { and, asc, count, eq } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import type { Valley } from "~/domain/quantities";
import { materialFamilies, materials, quantities, records, revisions, sources } from "../db/schema";
import type { Executor } from "./executor";
import { recordColumns, revisionsOfRecords, sourceColumns, sourceRef, toRecordSummary, toRevisionView, type RecordWithHistory, type StoredSource } from "./revision-rows";

// The materials page and a material's page: its records with their histories, and its current values for the
// derived numbers and the checks.

/** The columns every view of a material reads. */
const materialColumns = {
  id: materials.id,
  key: materials.key,
  name: materials.name,
  formula: materials.formula,
  kind: materials.kind,
  structure: materials.structure,
  compositionVariable: materials.compositionVariable,
};

export type MaterialSummary = {
  id: number;
  key: string;
  name: string;
  formula: string;
  kind: "element" | "binary" | "alloy";
  structure: "diamond" | "zinc_blende" | "wurtzite";
  compositionVariable: string | null;
  description: string | null;
  family: { id: number; key: string; name: string };
};

export type MaterialDetail = MaterialSummary & {
  endMemberA: { key: string; name: string } | null;
  endMemberB: { key: string; name: string } | null;
};

const endA = alias(materials, "end_a");
const endB = alias(materials, "end_b");

export async function findMaterial(ex: Executor, key: string): Promise<MaterialDetail | null> {
  const [row] = await ex
    .select({
      ...materialColumns,
      description: materials.description,
      family: { id: materialFamilies.id, key: materialFamilies.key, name: materialFamilies.name },
      endA: { key: endA.key, name: endA.name },
      endB: { key: endB.key, name: endB.name },
    })
    .from(materials)
    .innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
    .leftJoin(endA, eq(endA.id, materials.endMemberAId))
    .leftJoin(endB, eq(endB.id, materials.endMemberBId))
    .where(eq(materials.key, key))
    .limit(1);
  if (!row) return null;
  const { endA: a, endB: b, ...rest } = row;
  return { ...rest, endMemberA: a?.key ? { key: a.key, name: a.name! } : null, endMemberB: b?.key ? { key: b.key, name: b.name! } : null };
}

export type MaterialPageData = { material: MaterialDetail; records: RecordWithHistory[] };

/**
 * A material with every record and its full history (newest revision first), records in catalogue order. The
 * material page renders this; other pages (plots, checks) can call it for the same data.
 */
export async function loadMaterialPage(ex: Executor, key: string, options: { includeRetired?: boolean } = {}): Promise<MaterialPageData | null> {
  const material = await findMaterial(ex, key);
  if (!material) return null;
  const recs = await ex
    .select(recordColumns)
    .from(records)
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(options.includeRetired === false ? and(eq(records.materialId, material.id), eq(records.status, "active")) : eq(records.materialId, material.id))
    .orderBy(asc(quantities.sortOrder), asc(records.valley), asc(records.composition), asc(records.temperatureK), asc(records.id));
  const history = await revisionsOfRecords(ex, recs.map((r) => r.id));
  return {
    material,
    records: recs.map((r) => ({ ...toRecordSummary(r), revisions: (history.get(r.id) ?? []).map((rev) => toRevisionView(rev, r, r.quantity.canonicalUnit)) })),
  };
}

export type CurrentValue = {
  recordId: number;
  revisionId: number;
  quantityKey: string;
  unit: string;
  temperatureK: string | null;
  valley: Valley | null;
  composition: string | null;
  value: string;
  uncertainty: string | null;
  validFromK: string | null;
  validToK: string | null;
  potentialCoefficients: { n: number; valueEv: string }[] | null;
  periodAngstrom: string | null;
  source: StoredSource | null;
};

/** Every current value of a material (active records only), compact: the inputs of plots and derived numbers. */
export async function currentValuesOfMaterial(ex: Executor, materialId: number): Promise<CurrentValue[]> {
  const rows = await ex
    .select({
      recordId: records.id,
      revisionId: revisions.id,
      quantityKey: quantities.key,
      unit: quantities.canonicalUnit,
      temperatureK: records.temperatureK,
      valley: records.valley,
      composition: records.composition,
      value: revisions.value,
      uncertainty: revisions.uncertainty,
      validFromK: revisions.validFromK,
      validToK: revisions.validToK,
      potentialCoefficients: revisions.potentialCoefficients,
      periodAngstrom: revisions.periodAngstrom,
      source: sourceColumns,
    })
    .from(records)
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .innerJoin(revisions, eq(revisions.id, records.currentRevisionId))
    .leftJoin(sources, eq(sources.id, revisions.sourceId))
    .where(and(eq(records.materialId, materialId), eq(records.status, "active")))
    .orderBy(asc(quantities.sortOrder), asc(records.valley), asc(records.composition), asc(records.temperatureK));
  return rows.map((r) => ({ ...r, value: r.value!, source: sourceRef(r.source) }));
}

export type FamilyWithMaterials = {
  key: string;
  name: string;
  description: string | null;
  materials: (Omit<MaterialSummary, "family" | "description"> & { activeRecords: number })[];
};

/** Material families in name order, each with its materials and how many active records they have. */
export async function listMaterialsByFamily(ex: Executor): Promise<FamilyWithMaterials[]> {
  const [families, mats, counts] = await Promise.all([
    ex.select().from(materialFamilies).orderBy(asc(materialFamilies.name)),
    ex
      .select({ ...materialColumns, familyId: materials.familyId })
      .from(materials)
      .orderBy(asc(materials.kind), asc(materials.key)),
    // Counted apart and matched by id: a correlated subquery here came out with unqualified columns.
    ex.select({ materialId: records.materialId, n: count() }).from(records).where(eq(records.status, "active")).groupBy(records.materialId),
  ]);
  const activeOf = new Map(counts.map((c) => [c.materialId, Number(c.n)]));
  return families.map((f) => ({
    key: f.key,
    name: f.name,
    description: f.description,
    materials: mats.filter((m) => m.familyId === f.id).map(({ familyId: _familyId, ...m }) => ({ ...m, activeRecords: activeOf.get(m.id) ?? 0 })),
  }));
}


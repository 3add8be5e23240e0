import { asc, eq, inArray } from "drizzle-orm";
import type { CheckMaterial, CheckQuantity, CheckReportInputs, CheckValue } from "~/domain/check-report";
import { db } from "../db/client";
import { materials, quantities } from "../db/schema";
import { definitionOf } from "../registry/catalogue";
import type { Executor } from "../registry/executor";
import { currentValuesOfMaterial } from "../registry/material-page";

export type MaterialRow = CheckMaterial & { id: number; familyId: number; endMemberAId: number | null; endMemberBId: number | null; formula: string; compositionVariable: string | null };

const materialColumns = {
  id: materials.id, key: materials.key, name: materials.name, kind: materials.kind, structure: materials.structure, formula: materials.formula, familyId: materials.familyId,
  endMemberAId: materials.endMemberAId, endMemberBId: materials.endMemberBId, compositionVariable: materials.compositionVariable,
};

export async function materialById(ex: Executor, id: number): Promise<MaterialRow | null> {
  const [row] = await ex.select(materialColumns).from(materials).where(eq(materials.id, id)).limit(1);
  return row ?? null;
}

/** A material by key, or as a proposal may name it: by formula or name (case does not matter). */
export async function materialByName(ex: Executor, typed: string): Promise<MaterialRow | null> {
  const t = typed.trim().toLowerCase();
  if (!t) return null;
  const rows = await ex.select(materialColumns).from(materials).orderBy(asc(materials.key));
  return rows.find((m) => m.key.toLowerCase() === t) ?? rows.find((m) => m.formula.toLowerCase() === t || m.name.toLowerCase() === t) ?? null;
}

/** Ranges, symbols and tolerances of every quantity as they stand in the table (catalogue defaults where it is empty). */
export async function loadCheckQuantities(ex: Executor = db()): Promise<CheckQuantity[]> {
  const rows = await ex.select().from(quantities).orderBy(asc(quantities.sortOrder));
  return rows.map((row) => {
    const d = definitionOf(row);
    return {
      key: row.key, symbol: row.symbol, name: row.name, canonicalUnit: row.canonicalUnit,
      rangeMin: d?.rangeMin ?? row.rangeMin, rangeMax: d?.rangeMax ?? row.rangeMax, checkTolerance: d?.checkTolerance ?? row.checkTolerance ?? null,
    };
  });
}

/** The current values of a material (active records only) as the checks read them. */
export async function materialCheckValues(ex: Executor, materialId: number): Promise<CheckValue[]> {
  const rows = await currentValuesOfMaterial(ex, materialId);
  return rows.map((r) => ({
    quantityKey: r.quantityKey, valley: r.valley, temperatureK: r.temperatureK, composition: r.composition, value: r.value, unit: r.unit, uncertainty: r.uncertainty,
    recordId: r.recordId, revisionId: r.revisionId, sourceLabel: r.source?.label ?? null, validFromK: r.validFromK, validToK: r.validToK,
    potentialCoefficients: r.potentialCoefficients, periodAngstrom: r.periodAngstrom,
  }));
}

/** An alloy's end members with their current values, or null for a binary or an alloy without both. */
export async function endMembersOf(ex: Executor, material: MaterialRow): Promise<CheckReportInputs["endMembers"]> {
  if (material.kind !== "alloy" || material.endMemberAId === null || material.endMemberBId === null) return null;
  const rows = await ex.select(materialColumns).from(materials).where(inArray(materials.id, [material.endMemberAId, material.endMemberBId]));
  const a = rows.find((m) => m.id === material.endMemberAId);
  const b = rows.find((m) => m.id === material.endMemberBId);
  if (!a || !b) return null;
  const [va, vb] = await Promise.all([materialCheckValues(ex, a.id), materialCheckValues(ex, b.id)]);
  return { a: { material: { key: a.key, name: a.name, kind: a.kind }, values: va }, b: { material: { key: b.key, name: b.name, kind: b.kind }, values: vb } };
}

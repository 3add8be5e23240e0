import { and, eq, inArray, isNotNull, type SQL } from "drizzle-orm";
import { normalisedDecimalKey } from "~/domain/exact-decimal";
import type { ReleaseItem } from "~/domain/release-format";
import { materials, quantities, records, revisions, sources } from "../db/schema";
import type { Executor } from "../registry/executor";

/** One record pinned at one revision. */
export type Pin = { recordId: number; revisionId: number };

const itemColumns = {
  recordId: records.id,
  recordStatus: records.status,
  conditionKey: records.conditionKey,
  temperatureK: records.temperatureK,
  valley: records.valley,
  composition: records.composition,
  currentRevisionId: records.currentRevisionId,
  materialKey: materials.key,
  materialName: materials.name,
  materialFormula: materials.formula,
  familyId: materials.familyId,
  quantityKey: quantities.key,
  quantitySymbol: quantities.symbol,
  quantityName: quantities.name,
  quantitySortOrder: quantities.sortOrder,
  unit: quantities.canonicalUnit,
  revisionId: revisions.id,
  revisionSeq: revisions.seq,
  revisionKind: revisions.kind,
  value: revisions.value,
  uncertainty: revisions.uncertainty,
  validFromK: revisions.validFromK,
  validToK: revisions.validToK,
  method: revisions.method,
  locator: revisions.locator,
  notes: revisions.notes,
  approvedBy: revisions.approvedBy,
  approvedAt: revisions.approvedAt,
  sourceId: sources.id,
  sourceKind: sources.kind,
  sourceDoi: sources.doi,
  sourceBibtexKey: sources.bibtexKey,
  sourceReport: sources.reportNumber,
  sourceTitle: sources.title,
  sourceAuthors: sources.authors,
  sourceYear: sources.year,
};

export type ItemRow = {
  recordId: number; recordStatus: "active" | "retired"; conditionKey: string; temperatureK: string | null; valley: "G" | "X" | "L" | null;
  composition: string | null; currentRevisionId: number | null; materialKey: string; materialName: string; materialFormula: string; familyId: number;
  quantityKey: string; quantitySymbol: string; quantityName: string; quantitySortOrder: number; unit: string;
  revisionId: number | null; revisionSeq: number | null; revisionKind: "value" | "retirement" | null; value: string | null; uncertainty: string | null;
  validFromK: string | null; validToK: string | null; method: ReleaseItem["method"]; locator: string | null; notes: string | null;
  approvedBy: number | null; approvedAt: Date | null;
  sourceId: number | null; sourceKind: "doi" | "bibtex" | "report" | null; sourceDoi: string | null; sourceBibtexKey: string | null;
  sourceReport: string | null; sourceTitle: string | null; sourceAuthors: string | null; sourceYear: number | null;
};

/** Rows of records joined to one revision each: `revisionOn` says which (a pinned one, or the current one). */
export async function selectItemRows(ex: Executor, revisionOn: "current" | "pinned", where: SQL | undefined): Promise<ItemRow[]> {
  const rows = await ex
    .select(itemColumns)
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .leftJoin(revisions, revisionOn === "current" ? eq(revisions.id, records.currentRevisionId) : eq(revisions.recordId, records.id))
    .leftJoin(sources, eq(sources.id, revisions.sourceId))
    .where(where);
  return (rows as ItemRow[]).sort(compareItemRows);
}

const byCodeUnits = (a: string, b: string) => (a < b ? -1 : a > b ? 1 : 0);

// Code-unit order, never locale order, so the same rows give the same bytes on every server.
export function compareItemRows(a: Pick<ItemRow, "materialKey" | "quantitySortOrder" | "quantityKey" | "conditionKey" | "recordId">, b: typeof a): number {
  return byCodeUnits(a.materialKey, b.materialKey) || a.quantitySortOrder - b.quantitySortOrder || byCodeUnits(a.quantityKey, b.quantityKey)
    || byCodeUnits(a.conditionKey, b.conditionKey) || a.recordId - b.recordId;
}

/** Whether a record can go into a release: active, with a current value revision that a lead approved. */
export function hasCurrentApprovedValue(row: ItemRow): boolean {
  return row.recordStatus === "active" && row.revisionKind === "value" && row.value !== null && row.approvedBy !== null && row.revisionId === row.currentRevisionId;
}

const blankToNull = (s: string | null) => (s === null || s.trim() === "" ? null : s);

function temperatureKind(conditionKey: string): ReleaseItem["temperatureKind"] {
  const t = /^T=([^|]*)\|/.exec(conditionKey)?.[1] ?? "";
  if (t === "fit0") return "fit0";
  return t === "" ? "independent" : "stated";
}

/** A joined row as an item of the release document (decimal columns in their shortest exact form). */
export function toReleaseItem(row: ItemRow): ReleaseItem {
  if (row.revisionId === null || row.revisionSeq === null || row.value === null) throw new Error(`record ${row.recordId} has no value revision`);
  return {
    recordId: row.recordId,
    revisionId: row.revisionId,
    revisionSeq: row.revisionSeq,
    material: { key: row.materialKey, name: row.materialName, formula: row.materialFormula },
    quantity: { key: row.quantityKey, symbol: row.quantitySymbol, name: row.quantityName },
    value: row.value,
    unit: row.unit,
    uncertainty: blankToNull(row.uncertainty),
    temperatureK: row.temperatureK === null ? null : normalisedDecimalKey(row.temperatureK),
    temperatureKind: temperatureKind(row.conditionKey),
    valley: row.valley,
    composition: row.composition === null ? null : normalisedDecimalKey(row.composition),
    validFromK: blankToNull(row.validFromK),
    validToK: blankToNull(row.validToK),
    method: row.method,
    source: row.sourceId === null || row.sourceKind === null || row.sourceTitle === null ? null : {
      kind: row.sourceKind,
      doi: blankToNull(row.sourceDoi),
      bibtexKey: blankToNull(row.sourceBibtexKey),
      reportNumber: blankToNull(row.sourceReport),
      title: row.sourceTitle,
      authors: blankToNull(row.sourceAuthors),
      year: row.sourceYear,
    },
    locator: blankToNull(row.locator),
    notes: blankToNull(row.notes),
    approvedAt: row.approvedAt ? row.approvedAt.toISOString() : null,
  };
}

/** The items of some pins, in release order; throws when a pin names a revision of another record. */
export async function loadPinnedItems(ex: Executor, pins: Pin[]): Promise<ReleaseItem[]> {
  if (pins.length === 0) return [];
  const rows = await selectItemRows(ex, "pinned", inArray(revisions.id, pins.map((p) => p.revisionId)));
  const wanted = new Map(pins.map((p) => [p.revisionId, p.recordId]));
  for (const r of rows) if (wanted.get(r.revisionId!) !== r.recordId) throw new Error(`revision ${r.revisionId} does not belong to record ${wanted.get(r.revisionId!)}`);
  if (rows.length !== pins.length) throw new Error("a pinned revision does not exist");
  return rows.map(toReleaseItem);
}

/** Current rows of some records (retired ones too, so callers can name them). */
export async function currentRowsOf(ex: Executor, recordIds: number[]): Promise<ItemRow[]> {
  if (recordIds.length === 0) return [];
  return selectItemRows(ex, "current", inArray(records.id, recordIds));
}

/** Active records with a current approved value that match a filter, in release order. */
export async function eligibleRows(ex: Executor, filter: { familyId?: number; materialKey?: string; quantityKey?: string; valley?: "G" | "X" | "L" }): Promise<ItemRow[]> {
  const parts: SQL[] = [eq(records.status, "active"), isNotNull(records.currentRevisionId)];
  if (filter.familyId !== undefined) parts.push(eq(materials.familyId, filter.familyId));
  if (filter.materialKey) parts.push(eq(materials.key, filter.materialKey));
  if (filter.quantityKey) parts.push(eq(quantities.key, filter.quantityKey));
  if (filter.valley) parts.push(eq(records.valley, filter.valley));
  const rows = await selectItemRows(ex, "current", and(...parts));
  return rows.filter(hasCurrentApprovedValue);
}

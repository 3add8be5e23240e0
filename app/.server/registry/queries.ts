import { and, asc, count, desc, eq, inArray, like, or, sql, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import { formatCslReference, shortSourceLabel, type CslItem } from "~/domain/citations";
import { conditionKey, quantityByKey, type Conditions, type Valley } from "~/domain/quantities";
import type { Method, RegistryView } from "~/domain/registry-schemas";
import { materialFamilies, materials, quantities, records, revisions, sources, users } from "../db/schema";
import type { Executor } from "./executor";

const proposer = alias(users, "proposer");
const approver = alias(users, "approver");

export type SourceRef = {
  id: number;
  kind: "doi" | "bibtex" | "report";
  label: string;
  title: string;
  reference: string;
  doi: string | null;
  reportNumber: string | null;
};

export type RevisionState = "current" | "superseded" | "retired";

export type RevisionView = {
  id: number;
  recordId: number;
  seq: number;
  kind: "value" | "retirement";
  state: RevisionState;
  value: string | null;
  significantDigits: number | null;
  inputValue: string | null;
  inputUnit: string | null;
  uncertainty: string | null;
  method: Method | null;
  locator: string | null;
  notes: string | null;
  potentialCoefficients: { n: number; valueEv: string }[] | null;
  periodAngstrom: string | null;
  validFromK: string | null;
  validToK: string | null;
  proposedBy: string | null;
  approvedBy: string | null;
  proposedAt: string | null;
  approvedAt: string | null;
  proposalId: number | null;
  source: SourceRef | null;
};

export type RecordSummary = {
  id: number;
  status: "active" | "retired";
  currentRevisionId: number | null;
  conditionKey: string;
  temperatureK: string | null;
  valley: Valley | null;
  composition: string | null;
  updatedAt: string;
  quantity: { id: number; key: string; symbol: string; name: string; canonicalUnit: string; sortOrder: number };
};

export type RecordWithHistory = RecordSummary & {
  /** Newest first. */
  revisions: RevisionView[];
};

const iso = (d: Date | null) => (d ? d.toISOString() : null);

type SourceColumns = {
  id: number | null;
  kind: "doi" | "bibtex" | "report" | null;
  title: string | null;
  authors: string | null;
  year: number | null;
  doi: string | null;
  reportNumber: string | null;
  csl?: unknown;
};

export function sourceRef(s: SourceColumns | null): SourceRef | null {
  if (!s || s.id === null || s.kind === null || s.title === null) return null;
  const summary = { kind: s.kind, title: s.title, authors: s.authors, year: s.year, doi: s.doi, reportNumber: s.reportNumber };
  const csl = s.csl as CslItem | null | undefined;
  const reference = csl ? formatCslReference(csl) : [s.authors, s.year ? `(${s.year})` : null].filter(Boolean).join(" ");
  return { id: s.id, kind: s.kind, label: shortSourceLabel(summary), title: s.title, reference, doi: s.doi, reportNumber: s.reportNumber };
}

const sourceColumns = {
  id: sources.id,
  kind: sources.kind,
  title: sources.title,
  authors: sources.authors,
  year: sources.year,
  doi: sources.doi,
  reportNumber: sources.reportNumber,
  csl: sources.csl,
};

const revisionColumns = {
  id: revisions.id,
  recordId: revisions.recordId,
  seq: revisions.seq,
  kind: revisions.kind,
  value: revisions.value,
  significantDigits: revisions.significantDigits,
  inputValue: revisions.inputValue,
  inputUnit: revisions.inputUnit,
  uncertainty: revisions.uncertainty,
  method: revisions.method,
  locator: revisions.locator,
  notes: revisions.notes,
  potentialCoefficients: revisions.potentialCoefficients,
  periodAngstrom: revisions.periodAngstrom,
  validFromK: revisions.validFromK,
  validToK: revisions.validToK,
  proposalId: revisions.proposalId,
  proposedAt: revisions.proposedAt,
  approvedAt: revisions.approvedAt,
  proposedBy: proposer.name,
  approvedBy: approver.name,
};

/** current: the record's current value; superseded: every other revision; retired: the revision that retired it. */
export function revisionState(record: { status: "active" | "retired"; currentRevisionId: number | null }, revision: { id: number; kind: "value" | "retirement" }): RevisionState {
  if (revision.id !== record.currentRevisionId) return "superseded";
  return revision.kind === "retirement" || record.status === "retired" ? "retired" : "current";
}

type RevisionRow = {
  [K in keyof typeof revisionColumns]: unknown;
} & { source: SourceColumns };

function toRevisionView(row: RevisionRow, record: { status: "active" | "retired"; currentRevisionId: number | null }): RevisionView {
  const r = row as unknown as Omit<RevisionView, "state" | "source" | "proposedAt" | "approvedAt"> & { proposedAt: Date | null; approvedAt: Date | null };
  return {
    ...r,
    state: revisionState(record, r),
    proposedAt: iso(r.proposedAt),
    approvedAt: iso(r.approvedAt),
    source: sourceRef(row.source),
  };
}

/** The revisions of some records with their sources and people, grouped by record, newest first. */
export async function revisionsOfRecords(ex: Executor, recordIds: number[]): Promise<Map<number, RevisionRow[]>> {
  const byRecord = new Map<number, RevisionRow[]>();
  if (recordIds.length === 0) return byRecord;
  const rows = await ex
    .select({ ...revisionColumns, source: sourceColumns })
    .from(revisions)
    .leftJoin(sources, eq(sources.id, revisions.sourceId))
    .leftJoin(proposer, eq(proposer.id, revisions.proposedBy))
    .leftJoin(approver, eq(approver.id, revisions.approvedBy))
    .where(inArray(revisions.recordId, recordIds))
    .orderBy(asc(revisions.recordId), desc(revisions.seq));
  for (const row of rows) {
    const list = byRecord.get(row.recordId) ?? [];
    list.push(row as RevisionRow);
    byRecord.set(row.recordId, list);
  }
  return byRecord;
}

const recordColumns = {
  id: records.id,
  status: records.status,
  currentRevisionId: records.currentRevisionId,
  conditionKey: records.conditionKey,
  temperatureK: records.temperatureK,
  valley: records.valley,
  composition: records.composition,
  updatedAt: records.updatedAt,
  quantity: {
    id: quantities.id,
    key: quantities.key,
    symbol: quantities.symbol,
    name: quantities.name,
    canonicalUnit: quantities.canonicalUnit,
    sortOrder: quantities.sortOrder,
  },
};

function toRecordSummary(r: {
  id: number; status: "active" | "retired"; currentRevisionId: number | null; conditionKey: string; temperatureK: string | null;
  valley: Valley | null; composition: string | null; updatedAt: Date; quantity: RecordSummary["quantity"];
}): RecordSummary {
  return { ...r, updatedAt: r.updatedAt.toISOString() };
}

export type RegistryRow = {
  recordId: number;
  status: "active" | "retired";
  materialKey: string;
  materialName: string;
  familyKey: string;
  quantityKey: string;
  quantitySymbol: string;
  quantityName: string;
  unit: string;
  temperatureK: string | null;
  valley: Valley | null;
  composition: string | null;
  revisionId: number;
  seq: number;
  kind: "value" | "retirement";
  value: string | null;
  uncertainty: string | null;
  method: Method | null;
  source: SourceRef | null;
  changedAt: string;
};

export type RegistryPage = { rows: RegistryRow[]; total: number; page: number; pageCount: number; size: number };

function escapeLike(text: string): string {
  return text.replace(/[\\%_]/g, (c) => `\\${c}`);
}

type TextMatches = { materialIds: number[]; quantityIds: number[]; sourceIds: number[] };

// Free text is matched against the small tables first (materials, quantities, sources); records are then picked by id.
async function matchText(ex: Executor, text: string): Promise<TextMatches> {
  const contains = `%${escapeLike(text)}%`;
  const [m, q, s] = await Promise.all([
    ex.select({ id: materials.id }).from(materials).where(or(like(materials.key, contains), like(materials.name, contains), like(materials.formula, contains))),
    ex.select({ id: quantities.id }).from(quantities).where(or(like(quantities.key, contains), like(quantities.name, contains), like(quantities.symbol, contains))),
    ex
      .select({ id: sources.id })
      .from(sources)
      .where(or(like(sources.title, contains), like(sources.authors, contains), like(sources.doi, contains), like(sources.reportNumber, contains), like(sources.bibtexKey, contains))),
  ]);
  return { materialIds: m.map((r) => r.id), quantityIds: q.map((r) => r.id), sourceIds: s.map((r) => r.id) };
}

// Every filter and sort of the registry table runs on the records table alone (its copies of material, quantity
// and current-revision columns); only the page's rows are then joined for display.
function registryFilters(view: RegistryView, text: TextMatches | null): SQL | undefined {
  const parts: SQL[] = [];
  if (view.status !== "all") parts.push(eq(records.status, view.status));
  if (view.family) parts.push(sql`${records.familyId} = (SELECT ${materialFamilies.id} FROM ${materialFamilies} WHERE ${materialFamilies.key} = ${view.family})`);
  if (view.material) parts.push(sql`${records.materialId} = (SELECT ${materials.id} FROM ${materials} WHERE ${materials.key} = ${view.material})`);
  if (view.quantity) parts.push(sql`${records.quantityId} = (SELECT ${quantities.id} FROM ${quantities} WHERE ${quantities.key} = ${view.quantity})`);
  if (view.method) parts.push(eq(records.currentMethod, view.method));
  if (text) {
    const any: SQL[] = [];
    if (text.materialIds.length) any.push(inArray(records.materialId, text.materialIds));
    if (text.quantityIds.length) any.push(inArray(records.quantityId, text.quantityIds));
    if (text.sourceIds.length) any.push(inArray(records.currentSourceId, text.sourceIds));
    parts.push(any.length ? or(...any)! : sql`FALSE`);
  }
  return parts.length ? and(...parts) : undefined;
}

// Columns fixed by a filter are left out of the order, and every column follows the one direction, so each
// common view reads in the order of one index of records and stops at the page.
function registryOrder(view: RegistryView): SQL[] {
  const d = view.dir === "desc" ? desc : asc;
  const material = view.material ? [] : [records.sortMaterial];
  const quantity = view.quantity ? [] : [records.quantitySort];
  const conditions = [records.valley, records.composition, records.temperatureK];
  const columns = {
    material: [...material, ...quantity, ...conditions, records.id],
    quantity: [...quantity, ...material, ...conditions, records.id],
    value: [records.currentValueNumeric, records.id],
    temperature: [records.temperatureK, ...material, ...quantity, records.valley, records.composition, records.id],
    changed: [records.updatedAt, records.id],
  }[view.sort];
  return columns.map((c) => d(c));
}

/**
 * One page of the registry table: the current revision of each record that passes the view's filters, sorted
 * and paged in SQL on the records table, with the total count; then the page's rows joined for display.
 */
export async function listRegistry(ex: Executor, view: RegistryView): Promise<RegistryPage> {
  const text = view.q ? await matchText(ex, view.q) : null;
  if (text && !text.materialIds.length && !text.quantityIds.length && !text.sourceIds.length) return { total: 0, page: 1, pageCount: 1, size: view.size, rows: [] };
  const where = registryFilters(view, text);
  const idsOf = (page: number) =>
    ex.select({ id: records.id }).from(records).where(where).orderBy(...registryOrder(view)).limit(view.size).offset((page - 1) * view.size);
  const [[{ n }], firstTry] = await Promise.all([ex.select({ n: count() }).from(records).where(where), idsOf(view.page)]);
  const total = Number(n);
  const pageCount = Math.max(1, Math.ceil(total / view.size));
  const page = Math.min(view.page, pageCount);
  const ids = (page === view.page ? firstTry : await idsOf(page)).map((r) => r.id);
  if (ids.length === 0) return { total, page, pageCount, size: view.size, rows: [] };
  const rows = await ex
    .select({
      recordId: records.id,
      status: records.status,
      materialKey: materials.key,
      materialName: materials.name,
      familyKey: materialFamilies.key,
      quantityKey: quantities.key,
      quantitySymbol: quantities.symbol,
      quantityName: quantities.name,
      unit: quantities.canonicalUnit,
      temperatureK: records.temperatureK,
      valley: records.valley,
      composition: records.composition,
      revisionId: revisions.id,
      seq: revisions.seq,
      kind: revisions.kind,
      value: revisions.value,
      uncertainty: revisions.uncertainty,
      method: revisions.method,
      changedAt: records.updatedAt,
      source: { id: sources.id, kind: sources.kind, title: sources.title, authors: sources.authors, year: sources.year, doi: sources.doi, reportNumber: sources.reportNumber },
    })
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .innerJoin(revisions, eq(revisions.id, records.currentRevisionId))
    .leftJoin(sources, eq(sources.id, revisions.sourceId))
    .where(inArray(records.id, ids));
  const position = new Map(ids.map((id, i) => [id, i]));
  rows.sort((a, b) => position.get(a.recordId)! - position.get(b.recordId)!);
  return {
    total,
    page,
    pageCount,
    size: view.size,
    rows: rows.map((r) => ({ ...r, changedAt: r.changedAt.toISOString(), source: sourceRef(r.source) })),
  };
}

export type RegistryOptions = {
  families: { key: string; name: string }[];
  materials: { key: string; name: string; familyKey: string }[];
  quantities: { key: string; name: string; symbol: string }[];
};

async function optionRows(ex: Executor, family: string | undefined, limit: number | undefined) {
  let mats = ex
    .select({ key: materials.key, name: materials.name, familyKey: materialFamilies.key })
    .from(materials)
    .innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
    .where(family ? eq(materialFamilies.key, family) : undefined)
    .orderBy(asc(materials.key))
    .$dynamic();
  if (limit !== undefined) mats = mats.limit(limit + 1);
  const [families, materialRows, qs] = await Promise.all([
    ex.select({ key: materialFamilies.key, name: materialFamilies.name }).from(materialFamilies).orderBy(asc(materialFamilies.name)),
    mats,
    ex.select({ key: quantities.key, name: quantities.name, symbol: quantities.symbol }).from(quantities).orderBy(asc(quantities.sortOrder)),
  ]);
  return { families, materials: materialRows, quantities: qs.filter((q) => !quantityByKey(q.key)?.storedWith) };
}

/** Families, every material and the record quantities: the choices of filters and pickers. */
export async function registryOptions(ex: Executor): Promise<RegistryOptions> {
  return optionRows(ex, undefined, undefined);
}

/** Beyond this many materials (in the chosen family, or all) the registry's filter takes a typed key instead of a list. */
export const MATERIAL_LIST_LIMIT = 100;

export type RegistryFilterOptions = Omit<RegistryOptions, "materials"> & { materials: RegistryOptions["materials"] | null };

/** The choices of the registry's filters; `materials` is null when there are too many to list (the key is typed). */
export async function registryFilterOptions(ex: Executor, options: { family?: string } = {}): Promise<RegistryFilterOptions> {
  const rows = await optionRows(ex, options.family, MATERIAL_LIST_LIMIT);
  return { ...rows, materials: rows.materials.length > MATERIAL_LIST_LIMIT ? null : rows.materials };
}

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
      id: materials.id,
      key: materials.key,
      name: materials.name,
      formula: materials.formula,
      kind: materials.kind,
      structure: materials.structure,
      compositionVariable: materials.compositionVariable,
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
    records: recs.map((r) => ({ ...toRecordSummary(r), revisions: (history.get(r.id) ?? []).map((rev) => toRevisionView(rev, r)) })),
  };
}

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
  return { material: material!, record: { ...toRecordSummary(r), revisions: (history.get(r.id) ?? []).map((rev) => toRevisionView(rev, r)) } };
}

/** The revision that holds a record's current value, or null when the record is retired or unknown. */
export async function getCurrentRevision(ex: Executor, recordId: number): Promise<RevisionView | null> {
  const [row] = await ex
    .select({ ...revisionColumns, source: sourceColumns, recordStatus: records.status, currentRevisionId: records.currentRevisionId })
    .from(records)
    .innerJoin(revisions, eq(revisions.id, records.currentRevisionId))
    .leftJoin(sources, eq(sources.id, revisions.sourceId))
    .leftJoin(proposer, eq(proposer.id, revisions.proposedBy))
    .leftJoin(approver, eq(approver.id, revisions.approvedBy))
    .where(and(eq(records.id, recordId), eq(records.status, "active")))
    .limit(1);
  if (!row) return null;
  return toRevisionView(row as unknown as RevisionRow, { status: row.recordStatus, currentRevisionId: row.currentRevisionId });
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
  source: SourceRef | null;
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

/** The current value of one quantity of a material under exact conditions, e.g. GaAs Eg at Γ, 300 K. */
export async function findCurrentValue(
  ex: Executor,
  query: { materialKey: string; quantityKey: string; conditions: Conditions },
): Promise<{ recordId: number; revision: RevisionView } | null> {
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
      .select({
        id: materials.id,
        key: materials.key,
        name: materials.name,
        formula: materials.formula,
        kind: materials.kind,
        structure: materials.structure,
        compositionVariable: materials.compositionVariable,
        familyId: materials.familyId,
      })
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

export type CitingValue = {
  recordId: number;
  revisionId: number;
  seq: number;
  state: RevisionState;
  materialKey: string;
  materialName: string;
  quantityKey: string;
  quantityName: string;
  quantitySymbol: string;
  unit: string;
  temperatureK: string | null;
  valley: Valley | null;
  composition: string | null;
  value: string | null;
  locator: string | null;
  kind: "value" | "retirement";
};

export type SourceListItem = SourceRef & { authors: string | null; year: number | null; revisionCount: number; currentCount: number; values: CitingValue[] };

const PREVIEW_PER_SOURCE = 6;

const citingColumns = {
  recordId: records.id,
  revisionId: revisions.id,
  seq: revisions.seq,
  kind: revisions.kind,
  status: records.status,
  currentRevisionId: records.currentRevisionId,
  materialKey: materials.key,
  materialName: materials.name,
  quantityKey: quantities.key,
  quantityName: quantities.name,
  quantitySymbol: quantities.symbol,
  unit: quantities.canonicalUnit,
  temperatureK: records.temperatureK,
  valley: records.valley,
  composition: records.composition,
  value: revisions.value,
  locator: revisions.locator,
};

/** A page of sources (newest year first), each with how often it is cited and the first current values citing it. */
export async function listSources(ex: Executor, options: { page: number; size: number }): Promise<{ sources: SourceListItem[]; total: number; page: number; pageCount: number }> {
  const [{ n }] = await ex.select({ n: count() }).from(sources);
  const total = Number(n);
  const pageCount = Math.max(1, Math.ceil(total / options.size));
  const page = Math.min(Math.max(1, options.page), pageCount);
  const rows = await ex
    .select({ ...sourceColumns })
    .from(sources)
    .orderBy(sql`${sources.year} IS NULL`, desc(sources.year), asc(sources.title), asc(sources.id))
    .limit(options.size)
    .offset((page - 1) * options.size);
  const ids = rows.map((r) => r.id);
  const counts = new Map<number, { total: number; current: number }>();
  const previews = new Map<number, CitingValue[]>();
  if (ids.length) {
    const [totals, currents] = await Promise.all([
      ex.select({ sourceId: revisions.sourceId, n: count() }).from(revisions).where(inArray(revisions.sourceId, ids)).groupBy(revisions.sourceId),
      ex
        .select({ sourceId: records.currentSourceId, n: count() })
        .from(records)
        .where(and(inArray(records.currentSourceId, ids), eq(records.status, "active")))
        .groupBy(records.currentSourceId),
    ]);
    for (const c of totals) counts.set(c.sourceId!, { total: Number(c.n), current: 0 });
    for (const c of currents) counts.set(c.sourceId!, { total: counts.get(c.sourceId!)?.total ?? 0, current: Number(c.n) });
    const ranked = ex.$with("ranked").as(
      ex
        .select({
          recordId: sql<number>`${records.id}`.as("record_id_"),
          rank: sql<number>`ROW_NUMBER() OVER (PARTITION BY ${records.currentSourceId} ORDER BY ${records.sortMaterial}, ${records.quantitySort}, ${records.valley}, ${records.composition}, ${records.temperatureK}, ${records.id})`.as("rank_"),
        })
        .from(records)
        .where(and(inArray(records.currentSourceId, ids), eq(records.status, "active"))),
    );
    const first = await ex.with(ranked).select({ recordId: ranked.recordId }).from(ranked).where(sql`${ranked.rank} <= ${PREVIEW_PER_SOURCE}`);
    const recordIds = first.map((r) => Number(r.recordId));
    if (recordIds.length) {
      const previewRows = await ex
        .select({ ...citingColumns, sourceId: records.currentSourceId })
        .from(records)
        .innerJoin(revisions, eq(revisions.id, records.currentRevisionId))
        .innerJoin(materials, eq(materials.id, records.materialId))
        .innerJoin(quantities, eq(quantities.id, records.quantityId))
        .where(inArray(records.id, recordIds))
        .orderBy(asc(records.sortMaterial), asc(records.quantitySort), asc(records.valley), asc(records.composition), asc(records.temperatureK), asc(records.id));
      for (const p of previewRows) {
        const list = previews.get(p.sourceId!) ?? [];
        const { sourceId: _sourceId, status, currentRevisionId, ...v } = p;
        list.push({ ...v, state: revisionState({ status, currentRevisionId }, { id: v.revisionId, kind: v.kind }) });
        previews.set(p.sourceId!, list);
      }
    }
  }
  return {
    total,
    page,
    pageCount,
    sources: rows.map((r) => ({
      ...sourceRef(r)!,
      authors: r.authors,
      year: r.year,
      revisionCount: counts.get(r.id)?.total ?? 0,
      currentCount: counts.get(r.id)?.current ?? 0,
      values: previews.get(r.id) ?? [],
    })),
  };
}

export type SourceDetail = {
  source: SourceRef & { authors: string | null; year: number | null; bibtex: string | null; csl: CslItem | null; createdAt: string };
  citing: CitingValue[];
  total: number;
  page: number;
  pageCount: number;
};

/** One source with every revision that cites it (current ones first), paged. */
export async function loadSource(ex: Executor, id: number, options: { page: number; size: number }): Promise<SourceDetail | null> {
  const [row] = await ex.select().from(sources).where(eq(sources.id, id)).limit(1);
  if (!row) return null;
  const [{ n }] = await ex.select({ n: count() }).from(revisions).where(eq(revisions.sourceId, id));
  const total = Number(n);
  const pageCount = Math.max(1, Math.ceil(total / options.size));
  const page = Math.min(Math.max(1, options.page), pageCount);
  const citing = await ex
    .select(citingColumns)
    .from(revisions)
    .innerJoin(records, eq(records.id, revisions.recordId))
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(eq(revisions.sourceId, id))
    .orderBy(sql`${records.currentRevisionId} = ${revisions.id} DESC`, asc(materials.key), asc(quantities.sortOrder), asc(records.valley), asc(records.composition), asc(records.temperatureK), desc(revisions.seq))
    .limit(options.size)
    .offset((page - 1) * options.size);
  return {
    source: { ...sourceRef(row)!, authors: row.authors, year: row.year, bibtex: row.bibtex, csl: (row.csl as CslItem | null) ?? null, createdAt: row.createdAt.toISOString() },
    citing: citing.map(({ status, currentRevisionId, ...c }) => ({ ...c, state: revisionState({ status, currentRevisionId }, { id: c.revisionId, kind: c.kind }) })),
    total,
    page,
    pageCount,
  };
}

import { and, asc, count, desc, eq, inArray, like, or, sql, type SQL } from "drizzle-orm";
import { quantityByKey, type Valley } from "~/domain/quantities";
import type { Method, RegistryView } from "~/domain/registry-schemas";
import { materialFamilies, materials, quantities, records, revisions, sources } from "../db/schema";
import type { Executor } from "./executor";
import { sourceRef, type StoredSource } from "./revision-rows";

// The registry page: one filtered, sorted page of current values, and the choices of its filters.

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
  source: StoredSource | null;
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


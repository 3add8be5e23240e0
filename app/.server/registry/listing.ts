import { and, asc, count, desc, eq, inArray, like, or, sql, type SQL } from "drizzle-orm";
import { normalisedDecimalKey } from "~/domain/exact-decimal";
import { describeTemperature, quantityByKey, VALLEY_LABELS, type Valley } from "~/domain/quantities";
import { METHOD_LABELS, type Method, type RegistryView } from "~/domain/registry-schemas";
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

type PageRowColumns = {
  recordId: number; status: "active" | "retired"; materialKey: string; materialName: string; familyKey: string;
  quantityKey: string; quantitySymbol: string; quantityName: string; unit: string;
  temperatureK: string | null; valley: Valley | null; composition: string | null;
  /** DATETIME(3) as MariaDB writes it in UTC ("2026-01-14 09:30:00.000"): the ORM's driver reads dates as text. */
  changedAt: string;
  revisionId: number; seq: number; kind: "value" | "retirement"; value: string | null; uncertainty: string | null; method: Method | null;
  sourceId: number | null; sourceKind: StoredSource["kind"] | null; sourceTitle: string | null; sourceAuthors: string | null;
  sourceYear: number | null; sourceDoi: string | null; sourceReportNumber: string | null;
};

// The page's rows in one statement: the ids of the page in the view's order (a derived table that reads one index
// of records and stops at the page), joined for display and put in the same order again. Mapped by hand: the query
// builder's per-column mapping of seven joined tables cost more than the statement (a CPU profile of the page).
function pageRowsStatement(where: SQL | undefined, order: SQL[], size: number, offset: number): SQL {
  return sql`
    SELECT records.id AS recordId, records.status, m.\`key\` AS materialKey, m.name AS materialName, f.\`key\` AS familyKey,
      q.\`key\` AS quantityKey, q.symbol AS quantitySymbol, q.name AS quantityName, q.canonical_unit AS unit,
      records.temperature_k AS temperatureK, records.valley, records.composition, records.updatedAt AS changedAt,
      v.id AS revisionId, v.seq, v.kind, v.value, v.uncertainty, v.method,
      s.id AS sourceId, s.kind AS sourceKind, s.title AS sourceTitle, s.authors AS sourceAuthors, s.year AS sourceYear,
      s.doi AS sourceDoi, s.report_number AS sourceReportNumber
    FROM (SELECT ${records.id} AS id FROM ${records} ${where ? sql`WHERE ${where}` : sql``} ORDER BY ${sql.join(order, sql`, `)} LIMIT ${size} OFFSET ${offset}) page_ids
    JOIN ${records} ON ${records.id} = page_ids.id
    JOIN ${materials} m ON m.id = ${records.materialId}
    JOIN ${materialFamilies} f ON f.id = m.family_id
    JOIN ${quantities} q ON q.id = ${records.quantityId}
    JOIN ${revisions} v ON v.id = ${records.currentRevisionId}
    LEFT JOIN ${sources} s ON s.id = v.source_id
    ORDER BY ${sql.join(order, sql`, `)}`;
}

function registryRow(r: PageRowColumns): RegistryRow {
  const source = sourceRef(
    r.sourceId === null
      ? null
      : { id: r.sourceId, kind: r.sourceKind, title: r.sourceTitle, authors: r.sourceAuthors, year: r.sourceYear, doi: r.sourceDoi, reportNumber: r.sourceReportNumber },
  );
  return {
    recordId: r.recordId, status: r.status, materialKey: r.materialKey, materialName: r.materialName, familyKey: r.familyKey,
    quantityKey: r.quantityKey, quantitySymbol: r.quantitySymbol, quantityName: r.quantityName, unit: r.unit,
    temperatureK: r.temperatureK, valley: r.valley, composition: r.composition,
    revisionId: r.revisionId, seq: r.seq, kind: r.kind, value: r.value, uncertainty: r.uncertainty, method: r.method,
    source, changedAt: new Date(`${r.changedAt.replace(" ", "T")}Z`).toISOString(),
  };
}

/**
 * One page of the registry table: the current revision of each record that passes the view's filters, sorted
 * and paged in SQL on the records table, with the total count (counted beside the page, in parallel).
 */
export async function listRegistry(ex: Executor, view: RegistryView): Promise<RegistryPage> {
  const text = view.q ? await matchText(ex, view.q) : null;
  if (text && !text.materialIds.length && !text.quantityIds.length && !text.sourceIds.length) return { total: 0, page: 1, pageCount: 1, size: view.size, rows: [] };
  const where = registryFilters(view, text);
  const order = registryOrder(view);
  const rowsOf = async (page: number) => {
    const [rows] = (await ex.execute(pageRowsStatement(where, order, view.size, (page - 1) * view.size))) as unknown as [PageRowColumns[]];
    return rows;
  };
  const [[{ n }], firstTry] = await Promise.all([ex.select({ n: count() }).from(records).where(where), rowsOf(view.page)]);
  const total = Number(n);
  const pageCount = Math.max(1, Math.ceil(total / view.size));
  const page = Math.min(view.page, pageCount);
  const rows = page === view.page ? firstTry : await rowsOf(page);
  return { total, page, pageCount, size: view.size, rows: rows.map(registryRow) };
}

/**
 * One row of the registry table as the page sends it to the browser: what the table shows and nothing else, as a
 * tuple (an object's keys cost more than its values in React Router's hydration data), labels already formatted.
 * The quantity goes by its key (symbol, name and unit come from the catalogue in ~/domain/quantities), the source by
 * its place in the page's `sources`, so a source cited by several rows is sent once.
 */
export type RegistryTableRow = [
  recordId: number,
  materialKey: string,
  quantityKey: string,
  /** The composition as it reads ("0.3"), null for a binary. */
  composition: string | null,
  /** The current revision retires the record. */
  retirement: boolean,
  /** The value in the quantity's unit. */
  value: string | null,
  uncertainty: string | null,
  /** "300 K", "0 K fit", "T-independent". */
  temperature: string,
  /** "Γ", or "—" without a valley. */
  valley: string,
  /** Index in the page's `sources`, null without a source. */
  source: number | null,
  /** The method's label, null when none is stated. */
  method: string | null,
  /** The day of the last change, "2026-01-14". */
  changed: string,
  seq: number,
];

/** A source the page's rows cite: its id (for its page), short label and full title. */
export type RegistryTableSource = [id: number, label: string, title: string];

export type RegistryTablePage = Omit<RegistryPage, "rows"> & { rows: RegistryTableRow[]; sources: RegistryTableSource[] };

/** The page as the registry table shows it (see RegistryTableRow). */
export function registryTablePage(page: RegistryPage): RegistryTablePage {
  const sourceIndex = new Map<number, number>();
  const cited: RegistryTableSource[] = [];
  const rows = page.rows.map((r): RegistryTableRow => {
    let source: number | null = null;
    if (r.source) {
      source = sourceIndex.get(r.source.id) ?? cited.push([r.source.id, r.source.label, r.source.title]) - 1;
      sourceIndex.set(r.source.id, source);
    }
    return [
      r.recordId,
      r.materialKey,
      r.quantityKey,
      r.composition === null ? null : normalisedDecimalKey(r.composition),
      r.kind === "retirement",
      r.value,
      r.uncertainty,
      describeTemperature(quantityByKey(r.quantityKey), r.temperatureK),
      r.valley ? VALLEY_LABELS[r.valley] : "—",
      source,
      r.method ? METHOD_LABELS[r.method] : null,
      r.changedAt.slice(0, 10),
      r.seq,
    ];
  });
  return { total: page.total, page: page.page, pageCount: page.pageCount, size: page.size, rows, sources: cited };
}

export type RegistryOptions = {
  families: { key: string; name: string }[];
  materials: { key: string; name: string; familyKey: string }[];
  quantities: { key: string; name: string; symbol: string }[];
};

/** Families, every material and the record quantities: the choices of filters and pickers. */
export async function registryOptions(ex: Executor): Promise<RegistryOptions> {
  const [families, materialRows, qs] = await Promise.all([
    ex.select({ key: materialFamilies.key, name: materialFamilies.name }).from(materialFamilies).orderBy(asc(materialFamilies.name)),
    ex
      .select({ key: materials.key, name: materials.name, familyKey: materialFamilies.key })
      .from(materials)
      .innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
      .orderBy(asc(materials.key)),
    ex.select({ key: quantities.key, name: quantities.name, symbol: quantities.symbol }).from(quantities).orderBy(asc(quantities.sortOrder)),
  ]);
  return { families, materials: materialRows, quantities: qs.filter((q) => !quantityByKey(q.key)?.storedWith) };
}

/** Beyond this many materials (in the chosen family, or all) the registry's filter takes a typed key instead of a list. */
export const MATERIAL_LIST_LIMIT = 100;

/** The filters' families and materials; their quantities are the catalogue's (RECORD_QUANTITIES in ~/domain/quantities). */
export type RegistryFilterOptions = Pick<RegistryOptions, "families"> & { materials: RegistryOptions["materials"] | null };

/**
 * The choices of the registry's filters that live in the database; `materials` is null when there are too many to list
 * (the key is typed). The quantities table follows the catalogue (syncQuantities), so the filter lists the catalogue's.
 */
export async function registryFilterOptions(ex: Executor, options: { family?: string } = {}): Promise<RegistryFilterOptions> {
  const [families, materialRows] = await Promise.all([
    ex.select({ key: materialFamilies.key, name: materialFamilies.name }).from(materialFamilies).orderBy(asc(materialFamilies.name)),
    ex
      .select({ key: materials.key, name: materials.name, familyKey: materialFamilies.key })
      .from(materials)
      .innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
      .where(options.family ? eq(materialFamilies.key, options.family) : undefined)
      .orderBy(asc(materials.key))
      .limit(MATERIAL_LIST_LIMIT + 1),
  ]);
  return { families, materials: materialRows.length > MATERIAL_LIST_LIMIT ? null : materialRows };
}

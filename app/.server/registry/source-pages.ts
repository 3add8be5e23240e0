import { and, asc, count, desc, eq, inArray, sql } from "drizzle-orm";
import type { CslItem } from "~/domain/citations";
import type { Valley } from "~/domain/quantities";
import type { StoredRevisionState } from "~/domain/revision-view";
import { materials, quantities, records, revisions, sources } from "../db/schema";
import type { Executor } from "./executor";
import { revisionState, sourceColumns, sourceRef, type StoredSource } from "./revision-rows";

// The sources page and a source's page: every paper, book and report with the values that cite it.

export type CitingValue = {
  recordId: number;
  revisionId: number;
  seq: number;
  state: StoredRevisionState;
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

export type SourceListItem = StoredSource & { authors: string | null; year: number | null; revisionCount: number; currentCount: number; values: CitingValue[] };

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
  source: StoredSource & { authors: string | null; year: number | null; bibtex: string | null; csl: CslItem | null; createdAt: string };
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

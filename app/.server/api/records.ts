import { and, asc, eq, gt, inArray, type SQL } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import type { z } from "zod";
import type { recordHistorySchema, recordPageSchema, recordSchema, recordsQuerySchema, revisionSchema, sourceSchema } from "~/domain/api-schemas";
import { normalisedDecimalKey } from "~/domain/exact-decimal";
import { db } from "../db/client";
import { materialFamilies, materials, quantities, records, revisions, sources, users } from "../db/schema";
import { loadRecord, type RevisionView } from "../registry/queries";
import { apiError } from "./respond";

type ApiRecord = z.infer<typeof recordSchema>;
type ApiRevision = z.infer<typeof revisionSchema>;
type ApiSource = z.infer<typeof sourceSchema>;

// The cursor is the last id of the page as base64url JSON: opaque to clients, stable under inserts.
export function encodeCursor(lastId: number): string {
  return Buffer.from(JSON.stringify({ id: lastId }), "utf8").toString("base64url");
}

export function decodeCursor(cursor: string): number {
  try {
    const parsed = JSON.parse(Buffer.from(cursor, "base64url").toString("utf8")) as { id?: unknown };
    if (typeof parsed.id === "number" && Number.isSafeInteger(parsed.id) && parsed.id >= 0) return parsed.id;
  } catch {
    /* falls through to the 400 */
  }
  throw apiError(400, "invalid_cursor", "The cursor is not one this API handed out; start again without it.", "cursor");
}

function temperatureKind(conditionKey: string): ApiRecord["temperatureKind"] {
  const t = /^T=([^|]*)\|/.exec(conditionKey)?.[1] ?? "";
  return t === "fit0" ? "fit0" : t === "" ? "independent" : "stated";
}

const blank = (s: string | null) => (s === null || s === "" ? null : s);

async function sourcesById(ids: number[]): Promise<Map<number, ApiSource>> {
  if (ids.length === 0) return new Map();
  const rows = await db().select().from(sources).where(inArray(sources.id, [...new Set(ids)]));
  return new Map(rows.map((s) => [s.id, { kind: s.kind, doi: blank(s.doi), bibtexKey: blank(s.bibtexKey), reportNumber: blank(s.reportNumber), title: s.title, authors: blank(s.authors), year: s.year }]));
}

function revisionOf(view: RevisionView, unit: string, source: ApiSource | null): ApiRevision {
  return {
    id: view.id,
    seq: view.seq,
    kind: view.kind,
    state: view.state,
    value: view.value,
    unit,
    uncertainty: view.uncertainty,
    method: view.method,
    source,
    locator: view.locator,
    notes: view.notes,
    validFromK: view.validFromK,
    validToK: view.validToK,
    proposedBy: view.proposedBy,
    approvedBy: view.approvedBy,
    approvedAt: view.approvedAt,
  };
}

/** A record and its whole history (newest first), through the registry's own query. */
export async function recordHistory(id: number): Promise<z.infer<typeof recordHistorySchema>> {
  const page = await loadRecord(db(), id);
  if (!page) throw apiError(404, "not_found", `There is no record ${id}.`, "id");
  const { record, material } = page;
  const byId = await sourcesById(record.revisions.map((r) => r.source?.id).filter((x): x is number => typeof x === "number"));
  const unit = record.quantity.canonicalUnit;
  const history = record.revisions.map((r) => revisionOf(r, unit, r.source ? byId.get(r.source.id) ?? null : null));
  const current = history.find((r) => r.id === record.currentRevisionId && r.kind === "value" && record.status === "active") ?? null;
  return {
    record: {
      id: record.id,
      status: record.status,
      material: { key: material.key, name: material.name },
      quantity: { key: record.quantity.key, symbol: record.quantity.symbol, name: record.quantity.name },
      unit,
      temperatureK: record.temperatureK === null ? null : normalisedDecimalKey(record.temperatureK),
      temperatureKind: temperatureKind(record.conditionKey),
      valley: record.valley,
      composition: record.composition === null ? null : normalisedDecimalKey(record.composition),
      updatedAt: record.updatedAt,
      current,
    },
    revisions: history,
  };
}

const proposer = alias(users, "proposer");
const approver = alias(users, "approver");

/** One page of records in id order after the cursor, with the current revision of each. */
export async function listRecordsPage(query: z.infer<typeof recordsQuerySchema>): Promise<z.infer<typeof recordPageSchema>> {
  const parts: SQL[] = [];
  if (query.cursor) parts.push(gt(records.id, decodeCursor(query.cursor)));
  if (query.status !== "all") parts.push(eq(records.status, query.status));
  if (query.family) parts.push(eq(materialFamilies.key, query.family));
  if (query.material) parts.push(eq(materials.key, query.material));
  if (query.quantity) parts.push(eq(quantities.key, query.quantity));
  if (query.valley) parts.push(eq(records.valley, query.valley));
  if (query.method) parts.push(eq(revisions.method, query.method));
  const rows = await db()
    .select({
      id: records.id,
      status: records.status,
      conditionKey: records.conditionKey,
      temperatureK: records.temperatureK,
      valley: records.valley,
      composition: records.composition,
      updatedAt: records.updatedAt,
      currentRevisionId: records.currentRevisionId,
      materialKey: materials.key,
      materialName: materials.name,
      quantityKey: quantities.key,
      quantitySymbol: quantities.symbol,
      quantityName: quantities.name,
      unit: quantities.canonicalUnit,
      revision: {
        id: revisions.id, seq: revisions.seq, kind: revisions.kind, value: revisions.value, uncertainty: revisions.uncertainty, method: revisions.method,
        sourceId: revisions.sourceId, locator: revisions.locator, notes: revisions.notes, validFromK: revisions.validFromK, validToK: revisions.validToK,
        approvedAt: revisions.approvedAt,
      },
      proposedBy: proposer.name,
      approvedBy: approver.name,
    })
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .leftJoin(revisions, eq(revisions.id, records.currentRevisionId))
    .leftJoin(proposer, eq(proposer.id, revisions.proposedBy))
    .leftJoin(approver, eq(approver.id, revisions.approvedBy))
    .where(parts.length ? and(...parts) : undefined)
    .orderBy(asc(records.id))
    .limit(query.limit + 1);
  const page = rows.slice(0, query.limit);
  const byId = await sourcesById(page.map((r) => r.revision?.sourceId).filter((x): x is number => typeof x === "number"));
  return {
    records: page.map((r): ApiRecord => {
      const rev = r.revision;
      const current = rev && rev.id !== null && rev.kind === "value" && r.status === "active"
        ? {
          id: rev.id, seq: rev.seq!, kind: "value" as const, state: "current" as const, value: rev.value, unit: r.unit, uncertainty: rev.uncertainty,
          method: rev.method, source: rev.sourceId ? byId.get(rev.sourceId) ?? null : null, locator: rev.locator, notes: rev.notes,
          validFromK: rev.validFromK, validToK: rev.validToK, proposedBy: r.proposedBy, approvedBy: r.approvedBy, approvedAt: rev.approvedAt?.toISOString() ?? null,
        }
        : null;
      return {
        id: r.id,
        status: r.status,
        material: { key: r.materialKey, name: r.materialName },
        quantity: { key: r.quantityKey, symbol: r.quantitySymbol, name: r.quantityName },
        unit: r.unit,
        temperatureK: r.temperatureK === null ? null : normalisedDecimalKey(r.temperatureK),
        temperatureKind: temperatureKind(r.conditionKey),
        valley: r.valley,
        composition: r.composition === null ? null : normalisedDecimalKey(r.composition),
        updatedAt: r.updatedAt.toISOString(),
        current,
      };
    }),
    nextCursor: rows.length > query.limit ? encodeCursor(page[page.length - 1].id) : null,
  };
}

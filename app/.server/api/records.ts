import { inArray } from "drizzle-orm";
import type { z } from "zod";
import type { recordHistorySchema, recordPageSchema, recordSchema, recordsQuerySchema, revisionSchema, sourceSchema } from "~/domain/api-schemas";
import { normalisedDecimalKey } from "~/domain/exact-decimal";
import { db, pool } from "../db/client";
import { sources } from "../db/schema";
import type { StoredRevisionView } from "~/domain/revision-view";
import { loadRecord } from "../registry/record-page";
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

type SourceRow = Pick<typeof sources.$inferSelect, "id" | "kind" | "doi" | "bibtexKey" | "reportNumber" | "title" | "authors" | "year">;

function apiSource(s: SourceRow | null): ApiSource | null {
  return s ? { kind: s.kind, doi: blank(s.doi), bibtexKey: blank(s.bibtexKey), reportNumber: blank(s.reportNumber), title: s.title, authors: blank(s.authors), year: s.year } : null;
}

async function sourcesById(ids: number[]): Promise<Map<number, ApiSource>> {
  if (ids.length === 0) return new Map();
  const rows = await db().select().from(sources).where(inArray(sources.id, [...new Set(ids)]));
  return new Map(rows.map((s) => [s.id, apiSource(s)!]));
}

function revisionOf(view: StoredRevisionView, unit: string, source: ApiSource | null): ApiRevision {
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


type PageRow = {
  id: number; status: "active" | "retired"; condition_key: string; temperature_k: string | null; valley: ApiRecord["valley"]; composition: string | null;
  updated_at: Date; material_key: string; material_name: string; quantity_key: string; quantity_symbol: string; quantity_name: string; unit: string;
  rev_id: number | null; rev_seq: number | null; rev_kind: "value" | "retirement" | null; rev_value: string | null; rev_uncertainty: string | null;
  rev_method: ApiRevision["method"]; rev_locator: string | null; rev_notes: string | null; rev_valid_from_k: string | null; rev_valid_to_k: string | null;
  rev_approved_at: Date | null; proposed_by: string | null; approved_by: string | null;
  src_id: number | null; src_kind: ApiSource["kind"]; src_doi: string | null; src_bibtex_key: string | null; src_report_number: string | null;
  src_title: string; src_authors: string | null; src_year: number | null;
};

// The API's busiest read, written as one SQL statement and mapped by hand: the ORM's per-cell mapping cost more
// than the query itself (measured with npm run bench). The filters use the records table's own columns and copies,
// so the page's ids come from one index in id order and the scan stops at the page; only those rows are joined.
const PAGE_SQL = (where: string) => `
  SELECT r.id, r.status, r.condition_key, r.temperature_k, r.valley, r.composition, r.updatedAt AS updated_at,
    m.\`key\` AS material_key, m.name AS material_name, q.\`key\` AS quantity_key, q.symbol AS quantity_symbol, q.name AS quantity_name, q.canonical_unit AS unit,
    v.id AS rev_id, v.seq AS rev_seq, v.kind AS rev_kind, v.value AS rev_value, v.uncertainty AS rev_uncertainty, v.method AS rev_method, v.locator AS rev_locator,
    v.notes AS rev_notes, v.valid_from_k AS rev_valid_from_k, v.valid_to_k AS rev_valid_to_k, v.approved_at AS rev_approved_at,
    pu.name AS proposed_by, au.name AS approved_by,
    s.id AS src_id, s.kind AS src_kind, s.doi AS src_doi, s.bibtex_key AS src_bibtex_key, s.report_number AS src_report_number, s.title AS src_title,
    s.authors AS src_authors, s.year AS src_year
  FROM (SELECT id FROM records WHERE ${where} ORDER BY id LIMIT ?) page_ids
  JOIN records r ON r.id = page_ids.id
  JOIN materials m ON m.id = r.material_id
  JOIN quantities q ON q.id = r.quantity_id
  LEFT JOIN revisions v ON v.id = r.current_revision_id
  LEFT JOIN users pu ON pu.id = v.proposed_by
  LEFT JOIN users au ON au.id = v.approved_by
  LEFT JOIN sources s ON s.id = v.source_id
  ORDER BY r.id`;

/** One page of records in id order after the cursor, with the current revision of each. */
export async function listRecordsPage(query: z.infer<typeof recordsQuerySchema>): Promise<z.infer<typeof recordPageSchema>> {
  const where: string[] = [];
  const params: unknown[] = [];
  const add = (clause: string, value: unknown) => {
    where.push(clause);
    params.push(value);
  };
  if (query.cursor) add("id > ?", decodeCursor(query.cursor));
  if (query.status !== "all") add("status = ?", query.status);
  if (query.family) add("family_id = (SELECT id FROM material_families WHERE `key` = ?)", query.family);
  if (query.material) add("material_id = (SELECT id FROM materials WHERE `key` = ?)", query.material);
  if (query.quantity) add("quantity_id = (SELECT id FROM quantities WHERE `key` = ?)", query.quantity);
  if (query.valley) add("valley = ?", query.valley);
  if (query.method) add("current_method = ?", query.method);
  const [result] = await pool().query(PAGE_SQL(where.length ? where.join(" AND ") : "TRUE"), [...params, query.limit + 1]);
  const rows = result as PageRow[];
  const page = rows.slice(0, query.limit);
  return {
    records: page.map((r): ApiRecord => ({
      id: r.id,
      status: r.status,
      material: { key: r.material_key, name: r.material_name },
      quantity: { key: r.quantity_key, symbol: r.quantity_symbol, name: r.quantity_name },
      unit: r.unit,
      temperatureK: r.temperature_k === null ? null : normalisedDecimalKey(r.temperature_k),
      temperatureKind: temperatureKind(r.condition_key),
      valley: r.valley,
      composition: r.composition === null ? null : normalisedDecimalKey(r.composition),
      updatedAt: r.updated_at.toISOString(),
      current: r.rev_id !== null && r.rev_kind === "value" && r.status === "active"
        ? {
          id: r.rev_id, seq: r.rev_seq!, kind: "value", state: "current", value: r.rev_value, unit: r.unit, uncertainty: r.rev_uncertainty,
          method: r.rev_method,
          source: r.src_id === null ? null : apiSource({ id: r.src_id, kind: r.src_kind, doi: r.src_doi, bibtexKey: r.src_bibtex_key, reportNumber: r.src_report_number, title: r.src_title, authors: r.src_authors, year: r.src_year }),
          locator: r.rev_locator, notes: r.rev_notes, validFromK: r.rev_valid_from_k, validToK: r.rev_valid_to_k,
          proposedBy: r.proposed_by, approvedBy: r.approved_by, approvedAt: r.rev_approved_at?.toISOString() ?? null,
        }
        : null,
    })),
    nextCursor: rows.length > query.limit ? encodeCursor(page[page.length - 1].id) : null,
  };
}

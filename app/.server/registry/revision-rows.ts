import { asc, desc, eq, inArray } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import { formatCslReference, shortSourceLabel, type CslItem } from "~/domain/citations";
import type { Valley } from "~/domain/quantities";
import type { SourceRef, StoredRevisionState, StoredRevisionView } from "~/domain/revision-view";
import { quantities, records, revisions, sources, users } from "../db/schema";
import type { Executor } from "./executor";

// How every registry page reads records and revisions: the columns, the people and the source of a revision, and
// the one revision view type (~/domain/revision-view) they become.

export const proposer = alias(users, "proposer");
export const approver = alias(users, "approver");

/** A stored source as the pages show it. */
export type StoredSource = SourceRef & { id: number };

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
  revisions: StoredRevisionView[];
};

const iso = (d: Date | null) => (d ? d.toISOString() : null);

export type SourceColumns = {
  id: number | null;
  kind: "doi" | "bibtex" | "report" | null;
  title: string | null;
  authors: string | null;
  year: number | null;
  doi: string | null;
  reportNumber: string | null;
  csl?: unknown;
};

export function sourceRef(s: SourceColumns | null): StoredSource | null {
  if (!s || s.id === null || s.kind === null || s.title === null) return null;
  const summary = { kind: s.kind, title: s.title, authors: s.authors, year: s.year, doi: s.doi, reportNumber: s.reportNumber };
  const csl = s.csl as CslItem | null | undefined;
  const reference = csl ? formatCslReference(csl) : [s.authors, s.year ? `(${s.year})` : null].filter(Boolean).join(" ");
  return { id: s.id, kind: s.kind, label: shortSourceLabel(summary), title: s.title, reference, doi: s.doi, reportNumber: s.reportNumber };
}

export const sourceColumns = {
  id: sources.id,
  kind: sources.kind,
  title: sources.title,
  authors: sources.authors,
  year: sources.year,
  doi: sources.doi,
  reportNumber: sources.reportNumber,
  csl: sources.csl,
};

export const revisionColumns = {
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
export function revisionState(record: { status: "active" | "retired"; currentRevisionId: number | null }, revision: { id: number; kind: "value" | "retirement" }): StoredRevisionState {
  if (revision.id !== record.currentRevisionId) return "superseded";
  return revision.kind === "retirement" || record.status === "retired" ? "retired" : "current";
}

export type RevisionRow = {
  [K in keyof typeof revisionColumns]: unknown;
} & { source: SourceColumns };

/** A revision row as the pages show it; `unit` is its quantity's canonical unit. */
export function toRevisionView(row: RevisionRow, record: { status: "active" | "retired"; currentRevisionId: number | null }, unit: string): StoredRevisionView {
  const r = row as unknown as Omit<StoredRevisionView, "state" | "source" | "proposedAt" | "approvedAt" | "unit"> & { proposedAt: Date | null; approvedAt: Date | null };
  return {
    ...r,
    unit,
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

export const recordColumns = {
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

export function toRecordSummary(r: {
  id: number; status: "active" | "retired"; currentRevisionId: number | null; conditionKey: string; temperatureK: string | null;
  valley: Valley | null; composition: string | null; updatedAt: Date; quantity: RecordSummary["quantity"];
}): RecordSummary {
  return { ...r, updatedAt: r.updatedAt.toISOString() };
}


import { eq, inArray } from "drizzle-orm";
import { alias } from "drizzle-orm/mysql-core";
import { conditionsLabel, readProposalPayload, type ProposalKind, type ProposalPayload } from "~/domain/proposal-schemas";
import { conditionKey, quantityByKey, validateConditions, type Valley } from "~/domain/quantities";
import { displayUnit } from "~/domain/units";
import { materialFamilies, materials, proposals, quantities, records, revisions, users } from "../db/schema";
import type { Executor } from "../registry/executor";
import { findRecordId } from "../registry/records";
import type { ProposalSummary } from "./notice-templates";

const author = alias(users, "author");
const decider = alias(users, "decider");
const current = alias(revisions, "current_revision");
const base = alias(revisions, "base_revision");

export type ProposalRow = typeof proposals.$inferSelect;

/** A proposal with what it refers to: material and family, quantity, record and its current value, people. */
export type ProposalFacts = {
  row: ProposalRow;
  payload: ProposalPayload;
  authorName: string;
  deciderName: string | null;
  material: { id: number; key: string; name: string; formula: string; kind: "element" | "binary" | "alloy"; familyId: number; familyName: string } | null;
  quantity: { id: number; key: string; name: string; symbol: string; canonicalUnit: string } | null;
  record: { id: number; status: "active" | "retired"; currentRevisionId: number | null; temperatureK: string | null; valley: Valley | null; composition: string | null } | null;
  currentValue: { revisionId: number; kind: "value" | "retirement"; value: string | null } | null;
  /** The revision the proposal was based on: what it replaces, and what its change is shown against. */
  baseValue: { revisionId: number; kind: "value" | "retirement"; value: string | null } | null;
  /** The record the proposal would now change, and whether it moved on since the proposal was based on it. */
  stale: boolean;
  /** New records only: an existing record under the same conditions (someone created it meanwhile). */
  existingRecordId: number | null;
  conditionsLabel: string;
};

export async function loadFacts(ex: Executor, ids: number[]): Promise<ProposalFacts[]> {
  if (ids.length === 0) return [];
  const rows = await ex
    .select({
      row: proposals,
      authorName: author.name,
      deciderName: decider.name,
      material: {
        id: materials.id, key: materials.key, name: materials.name, formula: materials.formula, kind: materials.kind,
        familyId: materials.familyId, familyName: materialFamilies.name,
      },
      quantity: { id: quantities.id, key: quantities.key, name: quantities.name, symbol: quantities.symbol, canonicalUnit: quantities.canonicalUnit },
      record: {
        id: records.id, status: records.status, currentRevisionId: records.currentRevisionId, temperatureK: records.temperatureK,
        valley: records.valley, composition: records.composition,
      },
      currentValue: { revisionId: current.id, kind: current.kind, value: current.value },
      baseValue: { revisionId: base.id, kind: base.kind, value: base.value },
    })
    .from(proposals)
    .innerJoin(author, eq(author.id, proposals.authorId))
    .leftJoin(decider, eq(decider.id, proposals.decidedBy))
    .leftJoin(materials, eq(materials.id, proposals.materialId))
    .leftJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
    .leftJoin(quantities, eq(quantities.id, proposals.quantityId))
    .leftJoin(records, eq(records.id, proposals.recordId))
    .leftJoin(current, eq(current.id, records.currentRevisionId))
    .leftJoin(base, eq(base.id, proposals.baseRevisionId))
    .where(inArray(proposals.id, ids));
  const out: ProposalFacts[] = [];
  for (const r of rows) {
    const payload = readProposalPayload(r.row.payload);
    const material = r.material?.id ? (r.material as NonNullable<ProposalFacts["material"]>) : null;
    const quantity = r.quantity?.id ? (r.quantity as NonNullable<ProposalFacts["quantity"]>) : null;
    const record = r.record?.id ? (r.record as NonNullable<ProposalFacts["record"]>) : null;
    const currentValue = r.currentValue?.revisionId ? (r.currentValue as NonNullable<ProposalFacts["currentValue"]>) : null;
    const baseValue = r.baseValue?.revisionId ? (r.baseValue as NonNullable<ProposalFacts["baseValue"]>) : null;
    let existingRecordId: number | null = null;
    if (r.row.kind === "new_record" && material && quantity) {
      const key = newRecordConditionKey(payload, quantity.key, material.kind);
      if (key) existingRecordId = await findRecordId(ex, { materialId: material.id, quantityId: quantity.id, conditionKey: key });
    }
    const open = r.row.state === "draft" || r.row.state === "submitted";
    const stale = open && (r.row.kind === "new_record" ? existingRecordId !== null : record !== null && record.currentRevisionId !== r.row.baseRevisionId);
    out.push({
      row: r.row, payload, authorName: r.authorName, deciderName: r.deciderName, material, quantity, record, currentValue, baseValue, stale, existingRecordId,
      conditionsLabel: conditionsLabel(quantity?.key ?? payload.quantity, record ?? payloadConditions(payload)),
    });
  }
  return ids.map((id) => out.find((f) => f.row.id === id)).filter((f): f is ProposalFacts => f !== undefined);
}

export async function loadOneFact(ex: Executor, id: number): Promise<ProposalFacts | null> {
  const [f] = await loadFacts(ex, [id]);
  return f ?? null;
}

function payloadConditions(p: ProposalPayload) {
  return {
    temperatureK: p.temperatureMode === "stated" && p.temperatureK.trim() !== "" ? p.temperatureK.trim() : null,
    valley: (p.valley.trim() === "Γ" ? "G" : p.valley.trim().toUpperCase() || null) as Valley | null,
    composition: p.composition.trim() || null,
  };
}

/** The condition key a new-record proposal would take, or null while its conditions are incomplete. */
export function newRecordConditionKey(p: ProposalPayload, quantityKey: string, materialKind: "element" | "binary" | "alloy"): string | null {
  const q = quantityByKey(quantityKey);
  if (!q) return null;
  const checked = validateConditions(q, materialKind, payloadConditions(p));
  return checked.ok ? conditionKey(q, checked.conditions) : null;
}


export function withUnit(value: string | null, unit: string | null | undefined): string {
  if (value === null) return "—";
  const u = displayUnit(unit ?? "");
  return u ? `${value} ${u}` : value;
}

/** The title and the change of a proposal in one line each, for notices and lists; the change reads from the revision it was based on. */
export function summaryOf(f: ProposalFacts): ProposalSummary {
  const materialKey = f.material?.key ?? (f.payload.material.trim() || "?");
  const quantityName = f.quantity?.name ?? (f.payload.quantity.trim() || "?");
  const title = `${materialKey} · ${quantityName} (${f.conditionsLabel})`;
  const unit = f.quantity?.canonicalUnit ?? null;
  const replaced = f.baseValue ?? f.currentValue;
  const currentText = replaced?.kind === "retirement" ? "retired" : withUnit(replaced?.value ?? null, unit);
  const proposedText = f.row.proposedValue !== null ? withUnit(f.row.proposedValue, f.row.proposedUnit) : `${f.payload.value} ${f.payload.unit}`.trim() || "—";
  const kind: ProposalKind = f.row.kind;
  const change = kind === "new_record" ? `New record: ${proposedText}` : kind === "retirement" ? `Retire the record (current value ${currentText})` : `${currentText} → ${proposedText}`;
  return { id: f.row.id, title, change };
}

import { eq } from "drizzle-orm";
import { buildCheckReport, type CheckReport, type CheckReportResponse, type CheckValue } from "~/domain/check-report";
import { parseExactDecimal } from "~/domain/exact-decimal";
import { readProposalPayload, type ProposalPayload } from "~/domain/proposal-schemas";
import { quantityByKey, VALLEY_KEYS, type Valley } from "~/domain/quantities";
import { convertToCanonical } from "~/domain/units";
import { db } from "../db/client";
import { proposals, quantities, records } from "../db/schema";
import type { Executor } from "../registry/executor";
import { endMembersOf, loadCheckQuantities, materialById, materialByName, materialCheckValues, type MaterialRow } from "./inputs";

async function reportFor(ex: Executor, origin: CheckReport["origin"], material: MaterialRow, subject: CheckValue): Promise<CheckReport> {
  const [values, quantities, endMembers] = await Promise.all([materialCheckValues(ex, material.id), loadCheckQuantities(ex), endMembersOf(ex, material)]);
  return buildCheckReport({ origin, material: { key: material.key, name: material.name, kind: material.kind, structure: material.structure }, subject, values, quantities, endMembers });
}

async function recordRef(ex: Executor, recordId: number) {
  const [row] = await ex
    .select({ id: records.id, materialId: records.materialId, quantityId: records.quantityId, status: records.status, temperatureK: records.temperatureK, valley: records.valley, composition: records.composition })
    .from(records)
    .where(eq(records.id, recordId))
    .limit(1);
  return row ?? null;
}

/** The check report of a record's current value; a retired record has nothing to check (status none). */
export async function checkReportForRecord(recordId: number, ex: Executor = db()): Promise<CheckReportResponse> {
  const record = await recordRef(ex, recordId);
  if (!record) return { report: null, message: "There is no such record." };
  const material = await materialById(ex, record.materialId);
  if (!material) return { report: null, message: "The record's material is missing." };
  const values = await materialCheckValues(ex, material.id);
  const subject = values.find((v) => v.recordId === record.id);
  if (!subject) return { report: null, message: "This record is retired: it has no current value to check." };
  return { report: await reportFor(ex, "record", material, subject), message: null };
}

const blank = (s: string) => s.trim() === "";

function decimalOrNull(text: string): string | null {
  const parsed = parseExactDecimal(text);
  return parsed.ok ? parsed.value.canonical : null;
}

function valleyOf(text: string): Valley | null {
  const t = text.trim() === "Γ" ? "G" : text.trim().toUpperCase();
  return (VALLEY_KEYS as readonly string[]).includes(t) ? (t as Valley) : null;
}

/**
 * The check report of a proposal as typed (a stored payload or the proposal form's fields): its value replaces
 * the current value of the record it would change. A payload that names no known material and quantity yet, or a
 * retirement, gets a message instead.
 */
export async function checkReportForPayload(raw: unknown, ex: Executor = db()): Promise<CheckReportResponse> {
  const p: ProposalPayload = readProposalPayload(raw);
  let material: MaterialRow | null = null;
  let quantityKey: string | null = null;
  let conditions: Pick<CheckValue, "temperatureK" | "valley" | "composition">;
  let recordId: number | null = null;
  if (p.kind !== "new_record") {
    const record = /^\d{1,10}$/.test(p.recordId.trim()) ? await recordRef(ex, Number(p.recordId.trim())) : null;
    if (!record) return { report: null, message: "Choose the record this proposal changes to see its checks." };
    if (p.kind === "retirement") return { report: null, message: "A retirement states no value: there is nothing to check." };
    material = await materialById(ex, record.materialId);
    quantityKey = await quantityKeyOf(ex, record.quantityId);
    recordId = record.id;
    conditions = { temperatureK: record.temperatureK, valley: record.valley, composition: record.composition };
  } else {
    material = await materialByName(ex, p.material);
    const typed = p.quantity.trim().toLowerCase();
    const catalogue = await loadCheckQuantities(ex);
    quantityKey = catalogue.find((q) => q.key.toLowerCase() === typed || q.name.toLowerCase() === typed)?.key ?? null;
    conditions = {
      temperatureK: p.temperatureMode === "stated" && !blank(p.temperatureK) ? decimalOrNull(p.temperatureK) : null,
      valley: valleyOf(p.valley),
      composition: blank(p.composition) ? null : decimalOrNull(p.composition),
    };
  }
  const definition = quantityKey ? quantityByKey(quantityKey) : undefined;
  if (!material || !definition) return { report: null, message: "Choose the material and the quantity to see the checks." };
  const converted = blank(p.value) ? null : convertToCanonical(p.value, p.unit, definition.acceptedUnits);
  const coefficients = p.potentialCoefficients
    .map((c) => ({ n: Number(c.n.trim()), valueEv: decimalOrNull(c.valueEv) }))
    .filter((c): c is { n: number; valueEv: string } => Number.isInteger(c.n) && c.n >= 1 && c.n <= 50 && c.valueEv !== null);
  const subject: CheckValue = {
    quantityKey: definition.key,
    ...conditions,
    value: converted?.ok ? converted.value.canonical : null,
    unit: definition.canonicalUnit,
    recordId,
    revisionId: null,
    sourceLabel: null,
    validFromK: blank(p.validFromK) ? null : decimalOrNull(p.validFromK),
    validToK: blank(p.validToK) ? null : decimalOrNull(p.validToK),
    potentialCoefficients: coefficients,
    periodAngstrom: blank(p.periodAngstrom) ? null : decimalOrNull(p.periodAngstrom),
  };
  const report = await reportFor(ex, "proposal", material, subject);
  const message = subject.value !== null ? null : converted && !converted.ok ? `The value cannot be read yet: ${converted.message}` : "Enter the value to see its checks.";
  return { report, message };
}

async function quantityKeyOf(ex: Executor, quantityId: number): Promise<string | null> {
  const [row] = await ex.select({ key: quantities.key }).from(quantities).where(eq(quantities.id, quantityId)).limit(1);
  return row?.key ?? null;
}

/** The check report of a stored proposal, for its review page. */
export async function checkReportForProposal(proposalId: number, ex: Executor = db()): Promise<CheckReportResponse> {
  const [row] = await ex.select({ payload: proposals.payload, kind: proposals.kind, recordId: proposals.recordId }).from(proposals).where(eq(proposals.id, proposalId)).limit(1);
  if (!row) return { report: null, message: "There is no such proposal." };
  const payload = readProposalPayload(row.payload);
  payload.kind = row.kind;
  if (row.recordId !== null) payload.recordId = String(row.recordId);
  return checkReportForPayload(payload, ex);
}

/** The overall verdict of a proposal's checks, for proposals.check_status (null when nothing could be checked). */
export async function proposalCheckStatus(raw: unknown, ex: Executor = db()): Promise<CheckReport["status"] | null> {
  const { report } = await checkReportForPayload(raw, ex);
  return report ? report.status : null;
}

import { and, asc, eq, ne } from "drizzle-orm";
import { z } from "zod";
import { parseExactDecimal } from "~/domain/exact-decimal";
import { endMembersOf, materialByName, materialCheckValues } from "../checks/inputs";
import { db } from "../db/client";
import { materials, quantities, records } from "../db/schema";
import type { Executor } from "../registry/executor";
import { deriveMaterialValues, type DerivedInputs, type DerivedValuesData } from "~/domain/derived";

export const DERIVED_DEFAULT_TEMPERATURE_K = 300;
export const DERIVED_MAX_TEMPERATURE_K = 2000;

export type DerivedForm = {
  /** As typed, so the form shows what was asked for. */
  values: { temperature: string; x: string; substrate: string };
  errors: Partial<Record<"temperature" | "x" | "substrate", string>>;
};

const text = z.string().trim().max(40).catch("");
const searchSchema = z.object({ temperature: text.default(""), x: text.default(""), substrate: text.default("") });

function parseBounded(raw: string, min: number, max: number, message: string): { value: number | null; error?: string } {
  if (raw === "") return { value: null };
  const parsed = parseExactDecimal(raw);
  if (!parsed.ok) return { value: null, error: parsed.message };
  const value = parsed.value.decimal.toNumber();
  if (value < min || value > max) return { value: null, error: message };
  return { value };
}

/** The temperature, composition and substrate asked for in the material page's address (?temperature=&x=&substrate=). */
export function parseDerivedSearch(params: URLSearchParams): { form: DerivedForm; temperatureK: number; composition: number | null; substrateKey: string | null } {
  const raw = searchSchema.parse(Object.fromEntries(params));
  const errors: DerivedForm["errors"] = {};
  const t = parseBounded(raw.temperature, 0, DERIVED_MAX_TEMPERATURE_K, `Choose a temperature from 0 to ${DERIVED_MAX_TEMPERATURE_K} K.`);
  if (t.error) errors.temperature = t.error;
  const x = parseBounded(raw.x, 0, 1, "The composition x lies between 0 and 1.");
  if (x.error) errors.x = x.error;
  return {
    form: { values: raw, errors },
    temperatureK: t.value ?? DERIVED_DEFAULT_TEMPERATURE_K,
    composition: x.value,
    substrateKey: raw.substrate || null,
  };
}

/**
 * Binaries and elements with a current lattice constant at 300 K. `valuesOf` says whose values to read: every one's
 * (an alloy's page picks the substrate its composition matches), or only the one asked for (a binary's mismatch).
 */
async function substrateCandidates(ex: Executor, exceptId: number, valuesOf: "all" | string | null): Promise<DerivedInputs["substrates"]> {
  const rows = await ex
    .selectDistinct({ id: materials.id, key: materials.key, name: materials.name, kind: materials.kind })
    .from(materials)
    .innerJoin(records, eq(records.materialId, materials.id))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(and(ne(materials.kind, "alloy"), ne(materials.id, exceptId), eq(quantities.key, "lattice_a"), eq(records.status, "active"), eq(records.temperatureK, "300.000")))
    .orderBy(asc(materials.key));
  // In parallel: the pool spreads the per-substrate reads over its connections instead of one after another.
  const out = await Promise.all(rows.map(async (m) => ({
    material: { key: m.key, name: m.name, kind: m.kind },
    values: valuesOf === "all" || valuesOf === m.key ? await materialCheckValues(ex, m.id) : null,
  })));
  return out
    .filter((s) => s.values === null || s.values.some((v) => v.quantityKey === "lattice_a" && v.temperatureK !== null && Number(v.temperatureK) === 300))
    .map((s) => ({ material: s.material, values: s.values ?? [] }));
}

export type DerivedValuesPage = { derived: DerivedValuesData; form: DerivedForm };

/**
 * The derived values of a material for its page, at the temperature (and composition, substrate) in the address;
 * null for an unknown material.
 */
export async function loadDerivedValues(materialKey: string, params: URLSearchParams, ex: Executor = db()): Promise<DerivedValuesPage | null> {
  const material = await materialByName(ex, materialKey);
  if (!material || material.key !== materialKey) return null;
  const request = parseDerivedSearch(params);
  const [values, endMembers, substrates] = await Promise.all([
    materialCheckValues(ex, material.id),
    endMembersOf(ex, material),
    substrateCandidates(ex, material.id, material.kind === "alloy" ? "all" : request.substrateKey),
  ]);
  const derived = deriveMaterialValues(
    {
      material: { key: material.key, name: material.name, kind: material.kind, formula: material.formula, compositionVariable: material.compositionVariable },
      values, endMembers: endMembers ?? null, substrates,
    },
    // The page draws a straight line where a bowing parameter is missing (and says so at the value), so it asks for it.
    { temperatureK: request.temperatureK, composition: request.composition, substrateKey: request.substrateKey, defaultSubstrate: true, linearWhereBowingMissing: true },
  );
  if (request.substrateKey && derived.substrateKey !== request.substrateKey) request.form.errors.substrate = "Choose one of the substrates listed.";
  return { derived, form: request.form };
}

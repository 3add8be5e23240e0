import type { CheckMaterial, CheckValue } from "../check-report";
import { parseExactDecimal, normalisedDecimalKey } from "../exact-decimal";
import { CODATA_EDITION } from "../physics";
import { csvCell, type ReleaseContent, type ReleaseItem } from "../release-format";
import { deriveValues, derivedNumbersOf, type DerivedMaterial, type DerivedNumber, type MaterialValues } from "./derive";
import { GUM_METHOD } from "./uncertainty";

// A frozen release evaluated at a temperature (and composition, substrate): every derived number of each material
// from the release's pinned revisions alone, so a pipeline, the API and the release page get the same numbers, byte
// for byte, from the release hash and the conditions.

export const EVALUATION_SCHEMA = "bandledger.evaluation";
export const EVALUATION_SCHEMA_VERSION = 1;
export const EVALUATION_MAX_TEMPERATURE_K = 2000;

export const EVALUATION_CAUTION =
  "Values are for simulation: confirm them against your own measurements and qualification rules before a device decision.";

export type EvaluationField = "temperature" | "material" | "x" | "substrate" | "missingBowing";

/** The conditions as asked (decimal strings kept as typed, normalised). */
export interface EvaluationQuery {
  temperatureK: string;
  material: string | null;
  x: string | null;
  substrate: string | null;
  /** "name": a missing bowing parameter is named as missing; "linear": the caller asks for a straight line. */
  missingBowing: "name" | "linear";
}

export type EvaluationQueryResult = { ok: true; query: EvaluationQuery } | { ok: false; errors: Partial<Record<EvaluationField, string>> };

const KEY = /^[A-Za-z0-9_().-]{1,40}$/;

function decimalField(raw: string, label: string, min: number, max: number, range: string): { value: string } | { error: string } {
  const parsed = parseExactDecimal(raw);
  if (!parsed.ok) return { error: `${label}: ${parsed.message}` };
  const n = parsed.value.decimal;
  if (n.lessThan(min) || n.greaterThan(max)) return { error: range };
  return { value: normalisedDecimalKey(parsed.value.canonical) };
}

/** Reads the conditions of an evaluation as the API, the release page and the command line receive them. */
export function parseEvaluationQuery(raw: Partial<Record<EvaluationField, string | null | undefined>>): EvaluationQueryResult {
  const errors: Partial<Record<EvaluationField, string>> = {};
  const text = (k: EvaluationField) => (raw[k] ?? "").trim();
  let temperatureK = "";
  if (text("temperature") === "") errors.temperature = "temperature: give the temperature in K, e.g. 77 or 300.";
  else {
    const t = decimalField(text("temperature"), "temperature", 0, EVALUATION_MAX_TEMPERATURE_K, `temperature: choose a temperature from 0 to ${EVALUATION_MAX_TEMPERATURE_K} K.`);
    if ("error" in t) errors.temperature = t.error;
    else temperatureK = t.value;
  }
  let x: string | null = null;
  if (text("x") !== "") {
    const r = decimalField(text("x"), "x", 0, 1, "x: the composition x lies between 0 and 1.");
    if ("error" in r) errors.x = r.error;
    else x = r.value;
  }
  for (const k of ["material", "substrate"] as const) {
    if (text(k) !== "" && !KEY.test(text(k))) errors[k] = `${k}: name a material by its key, as the release lists it (e.g. GaAs, AlGaAs).`;
  }
  const bowing = text("missingBowing") || "name";
  if (bowing !== "name" && bowing !== "linear") errors.missingBowing = `missingBowing: "name" (the default) or "linear" (got "${bowing.slice(0, 20)}").`;
  if (Object.keys(errors).length) return { ok: false, errors };
  return { ok: true, query: { temperatureK, material: text("material") || null, x, substrate: text("substrate") || null, missingBowing: bowing as "name" | "linear" } };
}

/**
 * The end members of an alloy from its formula: "Al(x)Ga(1-x)As" gives A = AlAs (x = 1) and B = GaAs (x = 0),
 * "GaAs(x)Sb(1-x)" gives GaAs and GaSb. A release names materials by key, name and formula only, so the formula is
 * what ties an alloy to its end members offline. Null for a formula without exactly one (x) and one (1-x) part.
 */
export function endMemberFormulas(formula: string): { a: string; b: string } | null {
  const withX = /\(x\)/g;
  const withOneMinusX = /\(1-x\)/g;
  if ((formula.match(withX) ?? []).length !== 1 || (formula.match(withOneMinusX) ?? []).length !== 1) return null;
  const a = formula.replace(/[A-Z][a-z]?\(1-x\)/, "").replace("(x)", "");
  const b = formula.replace(/[A-Z][a-z]?\(x\)/, "").replace("(1-x)", "");
  if (!/^[A-Za-z0-9]+$/.test(a) || !/^[A-Za-z0-9]+$/.test(b)) return null;
  return { a, b };
}

function kindOf(formula: string): CheckMaterial["kind"] {
  if (/\(x\)/.test(formula)) return "alloy";
  return /^[A-Z][a-z]?$/.test(formula) ? "element" : "binary";
}

function sourceLabel(item: ReleaseItem): string | null {
  const s = item.source;
  if (!s) return null;
  return s.doi ? `doi:${s.doi}` : (s.bibtexKey ?? s.reportNumber ?? s.title);
}

function checkValueOf(item: ReleaseItem): CheckValue {
  return {
    quantityKey: item.quantity.key, valley: item.valley, temperatureK: item.temperatureK, composition: item.composition, value: item.value, unit: item.unit,
    uncertainty: item.uncertainty, recordId: item.recordId, revisionId: item.revisionId, sourceLabel: sourceLabel(item), validFromK: item.validFromK,
    validToK: item.validToK,
  };
}

interface ReleaseMaterial extends MaterialValues {
  material: DerivedMaterial;
}

/** The materials of a release with their pinned values, by key in release order. */
export function releaseMaterials(content: ReleaseContent): Map<string, ReleaseMaterial> {
  const out = new Map<string, ReleaseMaterial>();
  for (const item of content.items) {
    let m = out.get(item.material.key);
    if (!m) {
      const kind = kindOf(item.material.formula);
      m = { material: { key: item.material.key, name: item.material.name, kind, formula: item.material.formula, compositionVariable: kind === "alloy" ? "x" : null }, values: [] };
      out.set(item.material.key, m);
    }
    (m.values as CheckValue[]).push(checkValueOf(item));
  }
  return out;
}

const hasLattice300 = (m: MaterialValues) => m.values.some((v) => v.quantityKey === "lattice_a" && v.temperatureK !== null && Number(v.temperatureK) === 300 && v.composition === null);

/** Materials of the release that can be a substrate: not alloys, with a lattice constant at 300 K. */
export function releaseSubstrates(materials: Map<string, ReleaseMaterial>): ReleaseMaterial[] {
  return [...materials.values()].filter((m) => m.material.kind !== "alloy" && hasLattice300(m));
}

export interface EvaluatedValue {
  id: string;
  label: string;
  value: string;
  unit: string;
  standardUncertainty: string | null;
  uncertaintyStatus: "complete" | "partial" | "not-stated";
  /** The inputs that move the value but state no uncertainty ("± not stated", never zero). */
  uncertaintyNotStated: string[];
  formula: string;
  reference: string;
  warnings: string[];
  stated: { value: string; uncertainty: string | null; recordId: number | null; revisionId: number | null } | null;
  inputs: {
    material: string | null;
    symbol: string;
    value: string;
    unit: string;
    uncertainty: string | null;
    uncertaintyStated: boolean;
    sensitivity: string;
    contribution: string | null;
    recordId: number | null;
    revisionId: number | null;
    source: string | null;
  }[];
}

export interface EvaluatedMaterial {
  key: string;
  name: string;
  formula: string;
  kind: CheckMaterial["kind"];
  composition: string | null;
  endMembers: { a: string; b: string } | null;
  substrate: string | null;
  values: EvaluatedValue[];
  missing: string[];
}

export interface Evaluation {
  schema: typeof EVALUATION_SCHEMA;
  schemaVersion: typeof EVALUATION_SCHEMA_VERSION;
  /** The release it was computed from; its content hash first, so the file's first lines name it. */
  release: { sha256: string; set: string; setName: string; number: number; codataEdition: string; softwareVersion: string };
  evaluatedWith: { bandledgerVersion: string; codataEdition: string; uncertaintyMethod: string };
  conditions: { temperatureK: string; material: string | null; x: string | null; substrate: string | null; missingBowing: "name" | "linear" };
  caution: string;
  materials: EvaluatedMaterial[];
}

export type EvaluationResult = { ok: true; evaluation: Evaluation } | { ok: false; field: EvaluationField; message: string };

/** A derived number as exports and tables carry it: the uncertainty flattened, the budget with its inputs. */
export function evaluatedValueOf(n: DerivedNumber): EvaluatedValue {
  return {
    id: n.id, label: n.label, value: n.value, unit: n.unit,
    standardUncertainty: n.uncertainty.standard, uncertaintyStatus: n.uncertainty.status, uncertaintyNotStated: n.uncertainty.notStated,
    formula: n.formula, reference: n.reference, warnings: n.warnings, stated: n.stated,
    inputs: n.inputs.map((i) => ({
      material: i.material, symbol: i.symbol, value: i.value, unit: i.unit, uncertainty: i.uncertainty, uncertaintyStated: i.uncertainty !== null,
      sensitivity: i.sensitivity, contribution: i.contribution, recordId: i.recordId, revisionId: i.revisionId, source: i.sourceLabel,
    })),
  };
}

function listed(keys: string[]): string {
  return keys.length <= 12 ? keys.join(", ") : `${keys.slice(0, 12).join(", ")}, …`;
}

/**
 * Evaluates a release at the asked conditions. A material, substrate or composition that does not fit the release is
 * refused with the field named; what cannot be derived from the pinned values is named under `missing`.
 */
export function evaluateRelease(content: ReleaseContent, sha256: string, query: EvaluationQuery, bandledgerVersion: string): EvaluationResult {
  const materials = releaseMaterials(content);
  const where = `in ${content.set.name} release ${content.release.number}`;
  const keys = [...materials.keys()];
  if (query.material !== null && !materials.has(query.material)) {
    return { ok: false, field: "material", message: `material: ${query.material} is not in ${content.set.name} release ${content.release.number}, which holds ${listed(keys)}.` };
  }
  const substrates = releaseSubstrates(materials);
  if (query.substrate !== null && !substrates.some((s) => s.material.key === query.substrate)) {
    const names = substrates.map((s) => s.material.key);
    return {
      ok: false, field: "substrate",
      message: `substrate: ${query.substrate} is not a substrate of this release (a material with a lattice constant at 300 K); choose ${names.length ? `one of ${listed(names)}` : "none: the release holds no lattice constant at 300 K"}.`,
    };
  }
  const chosen = query.material !== null ? [materials.get(query.material)!] : [...materials.values()];
  if (query.material !== null && chosen[0].material.kind === "alloy" && query.x === null) {
    const ends = endMemberFormulas(chosen[0].material.formula);
    return { ok: false, field: "x", message: `x: ${query.material} is an alloy; give its composition x from 0 to 1${ends ? ` (the fraction of ${ends.a})` : ""}.` };
  }
  if (query.material !== null && chosen[0].material.kind !== "alloy" && query.x !== null) {
    return { ok: false, field: "x", message: `x: ${query.material} is not an alloy, so it takes no composition.` };
  }
  const byFormula = new Map([...materials.values()].map((m) => [m.material.formula, m]));
  const temperatureK = Number(query.temperatureK);
  const composition = query.x === null ? null : Number(query.x);
  const out: EvaluatedMaterial[] = [];
  for (const m of chosen) {
    const kind = m.material.kind;
    const formulas = kind === "alloy" ? endMemberFormulas(m.material.formula) : null;
    const base: EvaluatedMaterial = {
      key: m.material.key, name: m.material.name, formula: m.material.formula, kind, composition: kind === "alloy" ? query.x : null, endMembers: null,
      substrate: null, values: [], missing: [],
    };
    out.push(base);
    if (kind === "alloy") {
      if (!formulas) {
        base.missing.push(`${m.material.key}: its end members cannot be read from the formula ${m.material.formula}.`);
        continue;
      }
      const a = byFormula.get(formulas.a);
      const b = byFormula.get(formulas.b);
      if (!a || !b) {
        const absent = [!a && formulas.a, !b && formulas.b].filter(Boolean).join(" and ");
        base.missing.push(`${m.material.key}: nothing can be derived, its end member${absent.includes(" and ") ? "s" : ""} ${absent} ${absent.includes(" and ") ? "are" : "is"} not ${where}.`);
        continue;
      }
      base.endMembers = { a: a.material.key, b: b.material.key };
      if (composition === null) {
        base.missing.push(`${m.material.key}: an alloy needs a composition; give x (the fraction of ${a.material.key}) to evaluate it.`);
        continue;
      }
    }
    const ends = kind === "alloy" ? { a: byFormula.get(formulas!.a)!, b: byFormula.get(formulas!.b)! } : null;
    const derived = deriveValues(
      { material: m.material, values: m.values, endMembers: ends, substrates, where },
      {
        temperatureK, composition: kind === "alloy" ? composition : null, substrateKey: query.substrate, defaultSubstrate: false,
        linearWhereBowingMissing: query.missingBowing === "linear",
      },
    );
    base.substrate = derived.substrateKey;
    base.values = derivedNumbersOf(derived).map(evaluatedValueOf);
    base.missing = derived.missing;
  }
  return {
    ok: true,
    evaluation: {
      schema: EVALUATION_SCHEMA,
      schemaVersion: EVALUATION_SCHEMA_VERSION,
      release: {
        sha256, set: content.set.slug, setName: content.set.name, number: content.release.number,
        codataEdition: content.release.codataEdition, softwareVersion: content.release.softwareVersion,
      },
      evaluatedWith: { bandledgerVersion, codataEdition: CODATA_EDITION, uncertaintyMethod: GUM_METHOD },
      conditions: { temperatureK: query.temperatureK, material: query.material, x: query.x, substrate: query.substrate, missingBowing: query.missingBowing },
      caution: EVALUATION_CAUTION,
      materials: out,
    },
  };
}

/** The JSON file: two-space indentation, keys in a fixed order (the release and its hash first), a final newline. */
export function evaluationJsonText(e: Evaluation): string {
  return `${JSON.stringify(e, null, 2)}\n`;
}

export const EVALUATION_CSV_COLUMNS = [
  "material_key", "composition", "substrate", "id", "label", "value", "unit", "standard_uncertainty", "uncertainty_status", "uncertainty_not_stated",
  "formula", "reference", "revision_ids", "stated_value", "stated_uncertainty", "warnings",
] as const;

// Preamble values are JSON on one line, with "," and ";" escaped so that a spreadsheet keeps each line in one cell.
function preambleValue(value: string | number | null): string {
  return JSON.stringify(value).replace(/,/g, "\\u002c").replace(/;/g, "\\u003b");
}

const NOT_STATED = "not stated";

/**
 * The CSV form: `# key: value` lines naming the release hash and the conditions, the values that could not be
 * derived, then one row per derived value; CRLF line ends. An uncertainty that no input states reads "not stated".
 */
export function evaluationCsvText(e: Evaluation): string {
  const lines: string[] = [];
  const pre = (key: string, value: string | number | null) => lines.push(`# ${key}: ${preambleValue(value)}`);
  pre("schema", e.schema);
  pre("release_sha256", e.release.sha256);
  pre("schema_version", e.schemaVersion);
  pre("set_slug", e.release.set);
  pre("set_name", e.release.setName);
  pre("release_number", e.release.number);
  pre("release_codata_edition", e.release.codataEdition);
  pre("release_software_version", e.release.softwareVersion);
  pre("evaluated_with", `Bandledger ${e.evaluatedWith.bandledgerVersion}`);
  pre("codata_edition", e.evaluatedWith.codataEdition);
  pre("uncertainty_method", e.evaluatedWith.uncertaintyMethod);
  pre("temperature_k", e.conditions.temperatureK);
  pre("material", e.conditions.material);
  pre("x", e.conditions.x);
  pre("substrate", e.conditions.substrate);
  pre("missing_bowing", e.conditions.missingBowing);
  pre("caution", e.caution);
  for (const m of e.materials) for (const why of m.missing) pre("not_derived", `${m.key}: ${why}`);
  lines.push(EVALUATION_CSV_COLUMNS.join(","));
  for (const m of e.materials) {
    for (const v of m.values) {
      const cells: (string | null)[] = [
        m.key, m.composition, m.substrate, v.id, v.label, v.value, v.unit, v.standardUncertainty ?? NOT_STATED, v.uncertaintyStatus, v.uncertaintyNotStated.join("; ") || null,
        v.formula, v.reference, v.inputs.map((i) => i.revisionId).filter((id) => id !== null).join(" "), v.stated?.value ?? null,
        v.stated ? (v.stated.uncertainty ?? NOT_STATED) : null, v.warnings.join("; ") || null,
      ];
      lines.push(cells.map(csvCell).join(","));
    }
  }
  return lines.join("\r\n") + "\r\n";
}

export type EvaluationFormat = "json" | "csv";

export function evaluationText(e: Evaluation, format: EvaluationFormat): string {
  return format === "json" ? evaluationJsonText(e) : evaluationCsvText(e);
}

/** A file name that says what was evaluated: hemt-baseline-r3-77K-AlGaAs-x0.3.json. */
export function evaluationFileName(e: Evaluation, format: EvaluationFormat): string {
  const c = e.conditions;
  const parts = [`${e.release.set}-r${e.release.number}`, `${c.temperatureK}K`, c.material, c.x === null ? null : `x${c.x}`, c.substrate === null ? null : `on-${c.substrate}`];
  return `${parts.filter(Boolean).join("-")}.${format}`;
}

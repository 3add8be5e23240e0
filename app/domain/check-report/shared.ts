import { toDecimalString } from "../decimal";
import { normalisedDecimalKey, parseExactDecimal } from "../exact-decimal";
import { CODATA_EDITION, type FormFactorKey } from "../physics";
import { VALLEY_LABELS, type Valley } from "../quantities";
import { DEFAULT_TOLERANCES } from "./tolerances";
import type { CheckFigure, CheckInput, CheckKind, CheckMaterial, CheckQuantity, CheckReport, CheckReportInputs, CheckResult, CheckValue } from "./types";

// What every check module shares: reading the ledger's values under conditions, naming inputs with their
// revisions, the figures of a result, and the rule for inputs outside the physics' domain.

export const num = (s: string) => Number(s);
export const dec = (x: number) => toDecimalString(x);

// Conditions come from the ledger or from a form being typed: one that is not a number compares as written.
export function keyOf(s: string): string {
  return parseExactDecimal(s).ok ? normalisedDecimalKey(s) : s.trim();
}

export function sameDecimal(a: string | null, b: string | null): boolean {
  if (a === null || b === null) return a === b;
  return keyOf(a) === keyOf(b);
}

export function isNumber(s: string | null | undefined): s is string {
  return typeof s === "string" && parseExactDecimal(s).ok;
}

/** "300 K" for a stated temperature, "0 K" for a fit parameter. */
export function temperatureLabel(t: string | null): string {
  return t === null ? "0 K" : `${keyOf(t)} K`;
}

export function valleyLabel(v: Valley | null): string {
  return v ? VALLEY_LABELS[v] : "";
}

export function conditionsText(v: Pick<CheckValue, "valley" | "temperatureK" | "composition">, temperatureDependent: boolean): string {
  const parts = [
    v.composition !== null ? `x = ${keyOf(v.composition)}` : null,
    v.valley ? valleyLabel(v.valley) : null,
    temperatureDependent ? (v.temperatureK === null ? "0 K fit" : temperatureLabel(v.temperatureK)) : null,
  ].filter(Boolean);
  return parts.join(", ");
}

/** The registry quantity of each form factor of the pseudopotential check. */
export const FORM_FACTOR_QUANTITIES: Record<FormFactorKey, string> = {
  S3: "ff_vs3",
  S8: "ff_vs8",
  S11: "ff_vs11",
  A3: "ff_va3",
  A4: "ff_va4",
  A11: "ff_va11",
};

export const TEMPERATURE_INDEPENDENT = new Set(["varshni_alpha", "varshni_beta", "lattice_dadt", "delta_so", "ep", "kane_f", "vbo", "eg_bowing_c0", "eg_bowing_c1", ...Object.values(FORM_FACTOR_QUANTITIES)]);

/** The current value of a quantity under exact conditions, or null. */
export function findCheckValue(
  values: readonly CheckValue[],
  quantityKey: string,
  conditions: { valley?: Valley | null; temperatureK?: string | null; composition?: string | null },
): CheckValue | null {
  return (
    values.find(
      (v) =>
        v.quantityKey === quantityKey &&
        v.value !== null &&
        (v.valley ?? null) === (conditions.valley ?? null) &&
        sameDecimal(v.temperatureK, conditions.temperatureK ?? null) &&
        sameDecimal(v.composition, conditions.composition ?? null),
    ) ?? null
  );
}

export function sameConditions(a: CheckValue, b: CheckValue): boolean {
  return a.quantityKey === b.quantityKey && a.valley === b.valley && sameDecimal(a.temperatureK, b.temperatureK) && sameDecimal(a.composition, b.composition);
}

export function quantityOf(inputs: CheckReportInputs, key: string): CheckQuantity | undefined {
  return inputs.quantities.find((q) => q.key === key);
}

export function toleranceOf(inputs: CheckReportInputs, key: keyof typeof DEFAULT_TOLERANCES): number {
  const stated = quantityOf(inputs, key)?.checkTolerance;
  const value = isNumber(stated) ? num(stated) : NaN;
  return value > 0 ? value : num(DEFAULT_TOLERANCES[key]);
}

export function symbolOf(inputs: CheckReportInputs, v: Pick<CheckValue, "quantityKey" | "valley" | "temperatureK" | "composition">): string {
  const q = quantityOf(inputs, v.quantityKey);
  const base = q?.symbol ?? v.quantityKey;
  const conditions = conditionsText(v, !TEMPERATURE_INDEPENDENT.has(v.quantityKey));
  return conditions ? `${base}(${conditions})` : base;
}

/** What a check sees: the inputs, the subject, and the values it is checked against (the subject in its record's place). */
export interface Context {
  inputs: CheckReportInputs;
  subject: CheckValue;
  values: CheckValue[];
}

export function inputOf(ctx: Context, v: CheckValue, material: CheckMaterial | null = null): CheckInput {
  const isSubject = material === null && v === ctx.subject;
  return {
    symbol: symbolOf(ctx.inputs, v),
    value: v.value!,
    unit: v.unit,
    recordId: v.recordId,
    revisionId: v.revisionId,
    from: isSubject ? "subject" : "registry",
    material: material?.key ?? null,
    sourceLabel: v.sourceLabel,
  };
}

export function figure(label: string, value: number | string, unit: string): CheckFigure {
  return { label, value: typeof value === "number" ? dec(value) : value, unit };
}

export function baseResult(id: string, kind: CheckKind, title: string, formula: string, reference: string): CheckResult {
  return { id, kind, title, status: "none", formula, reference, inputs: [], stated: null, computed: [], residual: null, tolerance: null, notes: [], codataEdition: CODATA_EDITION };
}

// The physics and the exact decimals refuse what lies outside their domain with a RangeError (T + β ≤ 0, x > 1, a
// value that is not a number). A check reports that as its own failure with the reason, so one odd value in the
// ledger never takes a record or review page down; any other error is a fault of ours and is thrown.
export function failOnDomainError(r: CheckResult, error: unknown): CheckResult {
  if (!(error instanceof RangeError)) throw error;
  r.status = "fail";
  r.notes.push(`The check could not run on these inputs: ${error.message}.`);
  return r;
}

export function attempt(r: CheckResult, run: () => void): CheckResult {
  try {
    run();
  } catch (e) {
    failOnDomainError(r, e);
  }
  return r;
}

/** Where a check says which inputs it lacks. */
export type NotRun = CheckReport["notRun"];

/** One consistency check behind the report: a module of its own, listed in CHECKS (report.ts). */
export interface ConsistencyCheck {
  kind: CheckKind;
  /** The title of the failed result when the check is refused before it has one of its own. */
  title: string;
  /** Its results for the subject, or null (or none) when it does not apply; what is missing goes to notRun. */
  run(ctx: Context, notRun: NotRun): CheckResult | CheckResult[] | null;
}

import { parseExactDecimal, scaleExact, type ExactDecimal } from "./exact-decimal";

/** A unit accepted on input, with its exact factor to the canonical unit: canonical = input × factor. */
export type AcceptedUnit = { unit: string; factor: string };

export const ENERGY_EV: AcceptedUnit[] = [
  { unit: "eV", factor: "1" },
  { unit: "meV", factor: "0.001" },
  { unit: "µeV", factor: "0.000001" },
];
export const ENERGY_PER_KELVIN_MEV: AcceptedUnit[] = [
  { unit: "meV/K", factor: "1" },
  { unit: "eV/K", factor: "1000" },
  { unit: "µeV/K", factor: "0.001" },
];
/** Form factors: eV, or Ry as most tables give them; 1 Ry = R∞hc = 13.605693122994 eV exactly as CODATA 2018 prints it. */
export const RYDBERG_IN_EV = "13.605693122994";
export const FORM_FACTOR_EV: AcceptedUnit[] = [
  { unit: "eV", factor: "1" },
  { unit: "meV", factor: "0.001" },
  { unit: "Ry", factor: RYDBERG_IN_EV },
  { unit: "mRy", factor: "0.013605693122994" },
];
export const KELVIN: AcceptedUnit[] = [{ unit: "K", factor: "1" }];
export const LENGTH_ANGSTROM: AcceptedUnit[] = [
  { unit: "Å", factor: "1" },
  { unit: "nm", factor: "10" },
  { unit: "pm", factor: "0.01" },
];
export const LENGTH_PER_KELVIN_ANGSTROM: AcceptedUnit[] = [
  { unit: "Å/K", factor: "1" },
  { unit: "nm/K", factor: "10" },
  { unit: "pm/K", factor: "0.01" },
];
export const MASS_M0: AcceptedUnit[] = [{ unit: "m0", factor: "1" }];
/** Dimensionless quantities (Luttinger parameters, F) are written with the unit "1". */
export const DIMENSIONLESS: AcceptedUnit[] = [{ unit: "1", factor: "1" }];

const MICRO = /[\u03BC\u00B5]/g;

/**
 * The one spelling of a unit we store: µ as U+00B5 whether typed as U+00B5, U+03BC or "u"; Å as U+00C5 (also
 * from U+212B or "angstrom"); m₀, m_0 and m_e as "m0"; an empty unit, "-" or "dimensionless" as "1"; "meV K^-1"
 * and "meV·K⁻¹" as "meV/K".
 */
export function normaliseUnit(raw: string): string {
  let u = raw.normalize("NFC").trim().replace(/\s+/g, " ");
  if (u === "" || u === "-" || u === "—" || /^dimensionless$/i.test(u) || u === "1") return "1";
  u = u.replace(MICRO, "\u00B5");
  u = u.replace(/\u212B/g, "\u00C5").replace(/[aAåÅ]ngstr[oö]ms?/g, "\u00C5");
  u = u.replace(/\s*(?:\/|per)\s*/g, "/");
  u = u.replace(/\s*[·*. ]\s*K(?:\^?-1|⁻¹)$/, "/K");
  u = u.replace(/^u(?=(?:eV|m)(?:\/|$))/, "\u00B5");
  if (/^(?:m₀|m_0|m_e|me|m0)$/.test(u)) return "m0";
  return u;
}

/** Display form of a canonical unit: "m₀" for m0, and nothing for a dimensionless "1". */
export function displayUnit(unit: string): string {
  if (unit === "m0") return "m₀";
  if (unit === "1") return "";
  return unit;
}

export function findAcceptedUnit(accepted: readonly AcceptedUnit[], raw: string): AcceptedUnit | null {
  const wanted = normaliseUnit(raw);
  return accepted.find((a) => a.unit === wanted) ?? null;
}

export type Conversion = {
  /** The value in the canonical unit, exact, with the stated significant digits. */
  value: ExactDecimal;
  /** What was typed (trimmed) and its unit in our one spelling. */
  inputValue: string;
  inputUnit: string;
  factor: string;
};

export type ConversionResult =
  | ({ ok: true } & Conversion)
  | { ok: false; field: "value" | "unit"; message: string };

/**
 * Converts a typed value in one of the accepted units exactly to the canonical unit (decimal.js, never binary
 * floats): "0.565325" nm → "5.65325" Å, "540.5" µeV/K → "0.5405" meV/K.
 */
export function convertToCanonical(valueText: string, unitText: string, accepted: readonly AcceptedUnit[]): ConversionResult {
  const unit = findAcceptedUnit(accepted, unitText);
  if (!unit) {
    const list = accepted.map((a) => displayUnit(a.unit) || "dimensionless").join(", ");
    return { ok: false, field: "unit", message: `“${unitText.trim() || "(none)"}” is not accepted here; use ${list}.` };
  }
  const parsed = parseExactDecimal(valueText);
  if (!parsed.ok) return { ok: false, field: "value", message: parsed.message };
  const value = unit.factor === "1" ? parsed.value : scaleExact(parsed.value, unit.factor);
  return { ok: true, value, inputValue: valueText.trim(), inputUnit: unit.unit, factor: unit.factor };
}

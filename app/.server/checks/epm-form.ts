import { z } from "zod";
import { EPM_FORM_FACTOR_LIMIT, EPM_LATTICE_LIMIT_ANGSTROM } from "~/domain/api-schemas";
import { parseExactDecimal } from "~/domain/exact-decimal";
import {
  ANTISYMMETRIC_FORM_FACTOR_KEYS,
  type CrystalStructure,
  DEFAULT_EPM_TOLERANCE_EV,
  FORM_FACTOR_KEYS,
  type FormFactorKey,
  type FormFactors,
  type PseudopotentialCheckInput,
  rydbergToEv,
} from "~/domain/physics";
import { type EpmCheckResult, epmResultOf, memoizedPseudopotentialCheck } from "./epm-run";

// The interactive pseudopotential check: its query string (a GET form, so it works without JavaScript and every
// result has an address) read into the physics module's inputs, and the result as plain data.

export const EPM_PAGE_BAND_POINTS = 120;
const LATTICE_UNITS = { angstrom: 1, nm: 10 } as const;
export type LatticeUnit = keyof typeof LATTICE_UNITS;
export type FormFactorUnit = "ry" | "ev";

/** Field names of the form: s3, s8, s11, a3, a4, a11. */
export const FORM_FACTOR_FIELDS = FORM_FACTOR_KEYS.map((k) => k.toLowerCase()) as readonly Lowercase<FormFactorKey>[];

export type EpmFormValues = {
  structure: CrystalStructure;
  lattice: string;
  unit: LatticeUnit;
  ffunit: FormFactorUnit;
  formFactors: Record<Lowercase<FormFactorKey>, string>;
  gamma: string;
  x: string;
  l: string;
  tolerance: string;
};

export type EpmFormErrors = Record<string, string>;
export type EpmPageData = { values: EpmFormValues; errors: EpmFormErrors; result: EpmCheckResult | null };

const blankFormFactors = (): EpmFormValues["formFactors"] => ({ s3: "", s8: "", s11: "", a3: "", a4: "", a11: "" });

/** Silicon with the form factors and lattice constant of Cohen & Bergstresser (1966): the first visit. */
export const EPM_EXAMPLE: EpmFormValues = {
  structure: "diamond",
  lattice: "5.43",
  unit: "angstrom",
  ffunit: "ry",
  formFactors: { ...blankFormFactors(), s3: "-0.21", s8: "0.04", s11: "0.08" },
  gamma: "3.4",
  x: "",
  l: "",
  tolerance: String(DEFAULT_EPM_TOLERANCE_EV),
};

const text = z.string().trim().max(40).catch("");
const querySchema = z.object({
  structure: text.default(""),
  lattice: text.default(""),
  unit: text.default(""),
  ffunit: text.default(""),
  s3: text.default(""),
  s8: text.default(""),
  s11: text.default(""),
  a3: text.default(""),
  a4: text.default(""),
  a11: text.default(""),
  gamma: text.default(""),
  x: text.default(""),
  l: text.default(""),
  tolerance: text.default(""),
});

function numberIn(raw: string, min: number, max: number, outside: string): { value?: number; error?: string } {
  const parsed = parseExactDecimal(raw);
  if (!parsed.ok) return { error: parsed.message };
  const value = parsed.value.decimal.toNumber();
  if (!(value >= min && value <= max)) return { error: outside };
  return { value };
}

const SYMBOL: Record<FormFactorKey, string> = { S3: "V_S(3)", S8: "V_S(8)", S11: "V_S(11)", A3: "V_A(3)", A4: "V_A(4)", A11: "V_A(11)" };

/** Reads the check's query string; an empty one is the silicon example. */
export function readEpmQuery(params: URLSearchParams): { values: EpmFormValues; errors: EpmFormErrors; input: PseudopotentialCheckInput | null } {
  if (![...params.keys()].some((k) => k !== "live")) return readEpmQuery(epmQueryOf(EPM_EXAMPLE));
  const q = querySchema.parse(Object.fromEntries(params));
  const errors: EpmFormErrors = {};
  const structureKnown = q.structure === "" || q.structure === "diamond" || q.structure === "zincblende";
  const structure: CrystalStructure = q.structure === "zincblende" ? "zincblende" : "diamond";
  if (!structureKnown) errors.structure = "Choose diamond or zinc blende.";
  // An unknown unit is refused at its field, never read as Å or Ry: that would put the check off by the factor.
  const unitKnown = q.unit === "" || Object.hasOwn(LATTICE_UNITS, q.unit);
  const unit: LatticeUnit = unitKnown && q.unit !== "" ? (q.unit as LatticeUnit) : "angstrom";
  const ffunitKnown = q.ffunit === "" || q.ffunit === "ry" || q.ffunit === "ev";
  const ffunit: FormFactorUnit = q.ffunit === "ev" ? "ev" : "ry";
  if (!ffunitKnown) errors.ffunit = `“${q.ffunit}” is not a unit of the form factors: choose Ry or eV.`;
  const formFactors = { s3: q.s3, s8: q.s8, s11: q.s11, a3: q.a3, a4: q.a4, a11: q.a11 };
  const values: EpmFormValues = {
    structure, lattice: q.lattice, unit, ffunit, formFactors, gamma: q.gamma, x: q.x, l: q.l, tolerance: q.tolerance || String(DEFAULT_EPM_TOLERANCE_EV),
  };

  let latticeAngstrom: number | undefined;
  const scale = LATTICE_UNITS[unit];
  if (!unitKnown) errors.lattice = `“${q.unit}” is not a unit of the lattice constant: choose Å or nm.`;
  else if (!values.lattice) errors.lattice = "Enter the lattice constant a.";
  else {
    const { min, max } = EPM_LATTICE_LIMIT_ANGSTROM;
    const a = numberIn(values.lattice, min / scale, max / scale, unit === "nm" ? `The lattice constant lies between ${min / 10} and ${max / 10} nm.` : `The lattice constant lies between ${min} and ${max} Å.`);
    if (a.error) errors.lattice = a.error;
    else latticeAngstrom = a.value! * scale;
  }

  const limit = EPM_FORM_FACTOR_LIMIT[ffunit];
  const unitLabel = ffunit === "ry" ? "Ry" : "eV";
  const formFactorsEv: FormFactors = {};
  for (const key of FORM_FACTOR_KEYS) {
    const field = key.toLowerCase() as Lowercase<FormFactorKey>;
    const raw = formFactors[field];
    const antisymmetric = ANTISYMMETRIC_FORM_FACTOR_KEYS.includes(key);
    if (!raw) {
      if (!antisymmetric) errors[field] = `Enter ${SYMBOL[key]} in ${unitLabel}.`;
      continue;
    }
    const v = numberIn(raw, -limit, limit, `A form factor lies between −${limit} and ${limit} ${unitLabel}.`);
    if (v.error) {
      errors[field] = v.error;
      continue;
    }
    if (antisymmetric && structure === "diamond" && v.value !== 0) {
      errors[field] = "Diamond has one kind of atom: leave V_A empty, or choose zinc blende.";
      continue;
    }
    formFactorsEv[key] = ffunit === "ry" ? rydbergToEv(v.value!) : v.value!;
  }

  const stated: Record<"gamma" | "x" | "l", number | null> = { gamma: null, x: null, l: null };
  for (const point of ["gamma", "x", "l"] as const) {
    if (!values[point]) continue;
    const s = numberIn(values[point], 0, 20, "A stated gap lies between 0 and 20 eV.");
    if (s.error) errors[point] = s.error;
    else stated[point] = s.value!;
  }
  const tolerance = numberIn(values.tolerance, Number.MIN_VALUE, 5, "The tolerance lies above 0 and at most 5 eV.");
  if (tolerance.error) errors.tolerance = tolerance.error;
  if (Object.keys(errors).length) return { values, errors, input: null };
  return {
    values,
    errors,
    input: { structure, latticeAngstrom: latticeAngstrom!, formFactorsEv, stated, toleranceEv: tolerance.value!, bandPoints: EPM_PAGE_BAND_POINTS },
  };
}

/** The query string of a filled form (for example links and the fetcher). */
export function epmQueryOf(v: EpmFormValues): URLSearchParams {
  const params = new URLSearchParams({ structure: v.structure, lattice: v.lattice, unit: v.unit, ffunit: v.ffunit });
  for (const field of FORM_FACTOR_FIELDS) if (v.formFactors[field]) params.set(field, v.formFactors[field]);
  for (const point of ["gamma", "x", "l"] as const) if (v[point]) params.set(point, v[point]);
  params.set("tolerance", v.tolerance);
  return params;
}

/** Runs the check for the page: the same physics module as the API and the command line. */
export function runEpmPage(params: URLSearchParams): EpmPageData {
  const { values, errors, input } = readEpmQuery(params);
  if (!input) return { values, errors, result: null };
  try {
    return { values, errors, result: epmResultOf(memoizedPseudopotentialCheck(input)) };
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
    return { values, errors: { form: e.message }, result: null };
  }
}

export { blankFormFactors };

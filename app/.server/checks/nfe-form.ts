import { z } from "zod";
import { toDecimalString } from "~/domain/decimal";
import { parseExactDecimal } from "~/domain/exact-decimal";
import { checkNfeGap, CODATA_EDITION, DEFAULT_NFE_TOLERANCE_EV, PhysicsInputError, zoneBoundaryEnergyEv, type NfeCheck, type Verdict } from "~/domain/physics";

// The interactive nearly-free-electron check: its query string (a GET form, so it works without JavaScript and
// every result has an address) read into the physics module's inputs, and the result as plain data.

export const NFE_MAX_ROWS = 12;
const PERIOD_UNITS = { angstrom: 1, nm: 10 } as const;
export type PeriodUnit = keyof typeof PERIOD_UNITS;

export type NfeFormValues = {
  period: string;
  unit: PeriodUnit;
  coefficients: { n: string; u: string }[];
  gap: string;
  mass: string;
  stated: string;
  tolerance: string;
};

export type NfeFormErrors = Record<string, string>;

export type NfePageResult = {
  verdict: Verdict;
  gapIndex: number;
  kPiOverA: 0 | 1;
  periodAngstrom: number;
  massM0: number;
  coefficients: { n: number; energyEv: number }[];
  zoneBoundaryEv: string;
  firstOrder: { gapEv: string; lowerEv: string; upperEv: string };
  centralEquation: { gapEv: string; lowerEv: string; upperEv: string; planeWaves: number; converged: boolean };
  statedGapEv: string | null;
  toleranceEv: string;
  residualEv: string | null;
  notes: string[];
  codataEdition: string;
};

export type NfePageData = { values: NfeFormValues; errors: NfeFormErrors; result: NfePageResult | null };

/** What the page shows on a first visit: the two-band example of Kittel ch. 7 (U_G = 0.1 eV, a = 5.65325 Å, gap 2|U_G|). */
export const NFE_EXAMPLE: NfeFormValues = {
  period: "5.65325", unit: "angstrom", coefficients: [{ n: "1", u: "0.1" }], gap: "1", mass: "1", stated: "", tolerance: "0.01",
};

const text = z.string().trim().max(40).catch("");

const querySchema = z.object({
  period: text.default(""),
  unit: z.string().trim().max(40).catch(""),
  gap: text.default(""),
  mass: text.default(""),
  stated: text.default(""),
  tolerance: text.default(""),
  rows: z.coerce.number().int().min(1).max(NFE_MAX_ROWS).catch(1),
});

function numberIn(raw: string, min: number, max: number, outside: string): { value?: number; error?: string } {
  const parsed = parseExactDecimal(raw);
  if (!parsed.ok) return { error: parsed.message };
  const value = parsed.value.decimal.toNumber();
  if (!(value >= min && value <= max)) return { error: outside };
  return { value };
}

/** Reads the check's query string; an empty one is the worked example. */
export function readNfeQuery(params: URLSearchParams): { values: NfeFormValues; errors: NfeFormErrors; input: Parameters<typeof checkNfeGap>[0] | null } {
  if (![...params.keys()].some((k) => k !== "rows" && k !== "live")) return readNfeQuery(nfeQueryOf(NFE_EXAMPLE));
  const q = querySchema.parse(Object.fromEntries(params));
  const ns = params.getAll("n").map((s) => s.trim().slice(0, 40));
  const us = params.getAll("u").map((s) => s.trim().slice(0, 40));
  const rowCount = Math.min(NFE_MAX_ROWS, Math.max(q.rows, ns.length, us.length, 1));
  const coefficients = Array.from({ length: rowCount }, (_, i) => ({ n: ns[i] ?? "", u: us[i] ?? "" }));
  // An unknown unit ("eVV", "A") is refused at the period, never read as Å: that would put the check off by the factor.
  const unitKnown = q.unit === "" || Object.hasOwn(PERIOD_UNITS, q.unit);
  const unit: PeriodUnit = unitKnown && q.unit !== "" ? (q.unit as PeriodUnit) : "angstrom";
  const values: NfeFormValues = { period: q.period, unit, coefficients, gap: q.gap || "1", mass: q.mass || "1", stated: q.stated, tolerance: q.tolerance || String(DEFAULT_NFE_TOLERANCE_EV) };
  const errors: NfeFormErrors = {};

  let periodAngstrom: number | undefined;
  if (!unitKnown) errors.period = `“${q.unit}” is not a unit of the period: choose Å or nm.`;
  else if (!values.period) errors.period = "Enter the period a.";
  else {
    const scale = PERIOD_UNITS[values.unit];
    const p = numberIn(values.period, Number.MIN_VALUE, 100 / scale, `The period lies between 0 and ${values.unit === "nm" ? "10 nm" : "100 Å"}.`);
    if (p.error) errors.period = p.error;
    else periodAngstrom = p.value! * scale;
  }

  const parsed: { n: number; energyEv: number }[] = [];
  const seen = new Set<number>();
  coefficients.forEach((c, i) => {
    if (!c.n && !c.u) return;
    if (!/^\d{1,2}$/.test(c.n) || Number(c.n) < 1 || Number(c.n) > 50) {
      errors[`coefficients.${i}`] = "The order n is a whole number from 1 to 50.";
      return;
    }
    const n = Number(c.n);
    if (seen.has(n)) {
      errors[`coefficients.${i}`] = `U_${n} is given twice.`;
      return;
    }
    seen.add(n);
    const u = numberIn(c.u || "", -10, 10, "A coefficient lies between −10 and 10 eV.");
    if (u.error) errors[`coefficients.${i}`] = c.u ? u.error : `Enter U_${n} in eV.`;
    else parsed.push({ n, energyEv: u.value! });
  });
  if (parsed.length === 0 && !Object.keys(errors).some((k) => k.startsWith("coefficients."))) errors.coefficients = "Enter at least one coefficient U_n.";

  let gapIndex: number | undefined;
  if (!/^\d{1,2}$/.test(values.gap) || Number(values.gap) < 1 || Number(values.gap) > 20) errors.gap = "The gap index is a whole number from 1 to 20.";
  else gapIndex = Number(values.gap);

  const mass = numberIn(values.mass, 0.001, 100, "The mass lies between 0.001 and 100 m₀.");
  if (mass.error) errors.mass = mass.error;
  const tolerance = numberIn(values.tolerance, Number.MIN_VALUE, 1, "The tolerance lies above 0 and at most 1 eV.");
  if (tolerance.error) errors.tolerance = tolerance.error;
  let statedGapEv: number | null = null;
  if (values.stated) {
    const s = numberIn(values.stated, 0, 100, "A stated gap lies between 0 and 100 eV.");
    if (s.error) errors.stated = s.error;
    else statedGapEv = s.value!;
  }
  if (Object.keys(errors).length) return { values, errors, input: null };
  return {
    values,
    errors,
    input: { periodAngstrom: periodAngstrom!, coefficients: parsed, gapIndex: gapIndex!, massM0: mass.value!, statedGapEv, toleranceEv: tolerance.value! },
  };
}

/** The query string of a filled form (for example links and the fetcher). */
export function nfeQueryOf(v: NfeFormValues): URLSearchParams {
  const params = new URLSearchParams({ period: v.period, unit: v.unit });
  for (const c of v.coefficients) {
    params.append("n", c.n);
    params.append("u", c.u);
  }
  params.set("gap", v.gap);
  params.set("mass", v.mass);
  if (v.stated) params.set("stated", v.stated);
  params.set("tolerance", v.tolerance);
  return params;
}

const sentence = (message: string) => `${message.charAt(0).toUpperCase()}${message.slice(1)}.`;

/** The figures of a nearly-free-electron check as decimal strings, as the page, the API and the command line give them. */
export function nfeCheckFigures(check: NfeCheck) {
  const d = (x: number) => toDecimalString(x);
  return {
    firstOrder: { gapEv: d(check.firstOrder.gapEv), lowerEv: d(check.firstOrder.lowerEv), upperEv: d(check.firstOrder.upperEv) },
    centralEquation: {
      gapEv: d(check.centralEquation.gapEv), lowerEv: d(check.centralEquation.lowerEv), upperEv: d(check.centralEquation.upperEv),
      planeWaves: check.centralEquation.planeWaves, converged: check.centralEquation.converged,
    },
    statedGapEv: check.statedGapEv === null ? null : d(check.statedGapEv),
    toleranceEv: d(check.toleranceEv),
    residualEv: check.residualEv === null ? null : d(check.residualEv),
    notes: check.notes,
    codataEdition: CODATA_EDITION,
  };
}

/** Runs the check for the page: the same physics module as the API and the command line. */
export function runNfePage(params: URLSearchParams): NfePageData {
  const { values, errors, input } = readNfeQuery(params);
  if (!input) return { values, errors, result: null };
  const d = (x: number) => toDecimalString(x);
  try {
    const check = checkNfeGap(input);
    return {
      values,
      errors,
      result: {
        verdict: check.verdict,
        gapIndex: check.gapIndex,
        kPiOverA: check.kPiOverA,
        periodAngstrom: input.periodAngstrom,
        massM0: input.massM0 ?? 1,
        coefficients: [...input.coefficients].sort((a, b) => a.n - b.n),
        zoneBoundaryEv: d(zoneBoundaryEnergyEv(input.periodAngstrom, input.massM0)),
        ...nfeCheckFigures(check),
      },
    };
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
    // A period or mass too small for double precision is wrong at that field; other refusals concern the whole form.
    const field = e instanceof PhysicsInputError && (e.field === "period" || e.field === "mass") ? e.field : "form";
    return { values, errors: { [field]: sentence(e.message) }, result: null };
  }
}

import { exactDecimal, normalisedDecimalKey, parseExactDecimal } from "./exact-decimal";
import {
  DIMENSIONLESS, ENERGY_EV, ENERGY_PER_KELVIN_MEV, FORM_FACTOR_EV, KELVIN, LENGTH_ANGSTROM, LENGTH_PER_KELVIN_ANGSTROM, MASS_M0, displayUnit,
  type AcceptedUnit,
} from "./units";

export const VALLEY_KEYS = ["G", "X", "L"] as const;
export type Valley = (typeof VALLEY_KEYS)[number];
export const VALLEY_LABELS: Record<Valley, string> = { G: "Γ", X: "X", L: "L" };

/**
 * How a record of the quantity states its temperature:
 * - "stated": always at a temperature in K (a lattice constant at 300 K);
 * - "fit-or-stated": at a temperature, or as a 0 K parameter of a fit (Eg(0) of a Varshni fit, low-temperature masses);
 * - "fit": always a parameter of a temperature fit (Varshni α, β), shown as "0 K fit";
 * - "independent": no temperature (spin-orbit splitting, Kane energy, bowing, band offset).
 */
export type TemperatureMode = "stated" | "fit-or-stated" | "fit" | "independent";

export type QuantityDefinition = {
  key: string;
  symbol: string;
  name: string;
  canonicalUnit: string;
  acceptedUnits: AcceptedUnit[];
  /** Plausible range in the canonical unit (inclusive, exact decimal strings). */
  rangeMin: string;
  rangeMax: string;
  description: string;
  temperature: TemperatureMode;
  /** Valleys a record may state; empty when the quantity has no valley. */
  valleys: readonly Valley[];
  /** "alloy": records of an alloy state the composition x; "alloy-only": only alloys have it, with no x (bowing). */
  composition: "alloy" | "alloy-only" | "none";
  /** Revisions may state the temperature range their fit is valid in (valid_from_k, valid_to_k). */
  fitRange: boolean;
  /** Values kept on another quantity's revisions rather than as records of their own. */
  storedWith?: string;
  /** Tolerance of the consistency checks, in the canonical unit. */
  checkTolerance?: string;
  sortOrder: number;
};

const ALL_VALLEYS = VALLEY_KEYS;

// Pseudopotential form factors of a diamond or zinc-blende crystal, one record each; the number is |G|² in units of
// (2π/a)². Canonical eV, so the check needs no conversion; a value typed in Ry keeps its input and is stored exactly
// (× 13.605693122994). The range is ±1 Ry: published local form factors lie within a few tenths of a rydberg.
const FORM_FACTOR_TEXT =
  "of the local pseudopotential V(G) = V_S(|G|²) cos(G·τ) + i V_A(|G|²) sin(G·τ) of a diamond or zinc-blende crystal, τ = (a/8)(1,1,1), |G|² in units of (2π/a)². Often stated in Ry (1 Ry = 13.605693122994 eV). With the other form factors and the lattice constant a, the pseudopotential check computes the gaps at Γ, X and L.";
const formFactor = (key: string, kind: "S" | "A", square: number, sortOrder: number, checkTolerance?: string): QuantityDefinition => ({
  key,
  symbol: `V_${kind}(${square})`,
  name: `${kind === "S" ? "Symmetric" : "Antisymmetric"} form factor V_${kind}(${square})`,
  canonicalUnit: "eV",
  acceptedUnits: FORM_FACTOR_EV,
  rangeMin: "-13.6",
  rangeMax: "13.6",
  description: `${kind === "S" ? "Symmetric" : "Antisymmetric (zinc blende only: zero for diamond)"} form factor at |G|² = ${square} ${FORM_FACTOR_TEXT}`,
  temperature: "independent",
  valleys: [],
  composition: "none",
  fitRange: false,
  sortOrder,
  ...(checkTolerance ? { checkTolerance } : {}),
});


// One gap quantity with the valley as a condition of the record (not eg_gamma/eg_x/eg_l): Varshni α, β and the
// bowing parameters are per valley too, so every valley-dependent quantity filters and groups the same way.
export const QUANTITIES: readonly QuantityDefinition[] = [
  {
    key: "eg", symbol: "Eg", name: "Band gap", canonicalUnit: "eV", acceptedUnits: ENERGY_EV, rangeMin: "0", rangeMax: "7",
    description: "Energy from the top of the valence band to the conduction-band minimum in the stated valley. At a stated temperature, or as Eg(0), the 0 K parameter of a Varshni fit that goes with α and β.",
    temperature: "fit-or-stated", valleys: ALL_VALLEYS, composition: "alloy", fitRange: true, checkTolerance: "0.01", sortOrder: 10,
  },
  {
    key: "varshni_alpha", symbol: "α", name: "Varshni α", canonicalUnit: "meV/K", acceptedUnits: ENERGY_PER_KELVIN_MEV, rangeMin: "0", rangeMax: "3",
    description: "α of the Varshni form Eg(T) = Eg(0) − αT²/(T + β). Valid only with the Eg(0) and β it was fitted with, inside the fit range.",
    temperature: "fit", valleys: ALL_VALLEYS, composition: "alloy", fitRange: true, sortOrder: 20,
  },
  {
    key: "varshni_beta", symbol: "β", name: "Varshni β", canonicalUnit: "K", acceptedUnits: KELVIN, rangeMin: "0", rangeMax: "2000",
    description: "β of the Varshni form Eg(T) = Eg(0) − αT²/(T + β), a temperature of the order of the Debye temperature.",
    temperature: "fit", valleys: ALL_VALLEYS, composition: "alloy", fitRange: true, sortOrder: 21,
  },
  {
    key: "me", symbol: "m*e", name: "Electron effective mass at Γ", canonicalUnit: "m0", acceptedUnits: MASS_M0, rangeMin: "0.001", rangeMax: "2",
    description: "Conduction-band effective mass at the Γ minimum, in units of the free-electron mass m0.",
    temperature: "fit-or-stated", valleys: ["G"], composition: "alloy", fitRange: false, sortOrder: 30,
  },
  {
    key: "luttinger_g1", symbol: "γ1", name: "Luttinger γ1", canonicalUnit: "1", acceptedUnits: DIMENSIONLESS, rangeMin: "0", rangeMax: "50",
    description: "First Luttinger parameter of the valence band (dimensionless).",
    temperature: "fit-or-stated", valleys: [], composition: "alloy", fitRange: false, sortOrder: 40,
  },
  {
    key: "luttinger_g2", symbol: "γ2", name: "Luttinger γ2", canonicalUnit: "1", acceptedUnits: DIMENSIONLESS, rangeMin: "-5", rangeMax: "25",
    description: "Second Luttinger parameter of the valence band (dimensionless).",
    temperature: "fit-or-stated", valleys: [], composition: "alloy", fitRange: false, sortOrder: 41,
  },
  {
    key: "luttinger_g3", symbol: "γ3", name: "Luttinger γ3", canonicalUnit: "1", acceptedUnits: DIMENSIONLESS, rangeMin: "-5", rangeMax: "25",
    description: "Third Luttinger parameter of the valence band (dimensionless).",
    temperature: "fit-or-stated", valleys: [], composition: "alloy", fitRange: false, sortOrder: 42,
  },
  {
    key: "lattice_a", symbol: "a", name: "Lattice constant a", canonicalUnit: "Å", acceptedUnits: LENGTH_ANGSTROM, rangeMin: "2", rangeMax: "8",
    description: "Lattice constant a (the cubic cell edge, or the basal-plane constant of a wurtzite crystal) at the stated temperature.",
    temperature: "stated", valleys: [], composition: "alloy", fitRange: false, sortOrder: 50,
  },
  {
    key: "lattice_c", symbol: "c", name: "Lattice constant c", canonicalUnit: "Å", acceptedUnits: LENGTH_ANGSTROM, rangeMin: "3", rangeMax: "10",
    description: "Lattice constant c along the hexagonal axis of a wurtzite crystal at the stated temperature.",
    temperature: "stated", valleys: [], composition: "alloy", fitRange: false, sortOrder: 51,
  },
  {
    key: "lattice_dadt", symbol: "da/dT", name: "Thermal coefficient of a", canonicalUnit: "Å/K", acceptedUnits: LENGTH_PER_KELVIN_ANGSTROM, rangeMin: "0", rangeMax: "0.0002",
    description: "Temperature coefficient of the lattice constant a near room temperature, for a(T) = a(300 K) + (T − 300 K)·da/dT.",
    temperature: "independent", valleys: [], composition: "alloy", fitRange: true, sortOrder: 52,
  },
  {
    key: "delta_so", symbol: "Δso", name: "Spin-orbit splitting", canonicalUnit: "eV", acceptedUnits: ENERGY_EV, rangeMin: "0", rangeMax: "1.5",
    description: "Splitting between the heavy/light-hole bands and the split-off band at Γ.",
    temperature: "independent", valleys: [], composition: "alloy", fitRange: false, sortOrder: 60,
  },
  {
    key: "ep", symbol: "Ep", name: "Kane energy Ep", canonicalUnit: "eV", acceptedUnits: ENERGY_EV, rangeMin: "0", rangeMax: "40",
    description: "Energy of the interband momentum matrix element, Ep = 2m0P²/ħ², of the Kane model.",
    temperature: "independent", valleys: [], composition: "alloy", fitRange: false, sortOrder: 61,
  },
  {
    key: "kane_f", symbol: "F", name: "Remote-band parameter F", canonicalUnit: "1", acceptedUnits: DIMENSIONLESS, rangeMin: "-5", rangeMax: "5",
    description: "Contribution of remote bands to the conduction-band mass in m0/m* = 1 + 2F + Ep(Eg + 2Δso/3)/(Eg(Eg + Δso)) (dimensionless).",
    temperature: "independent", valleys: [], composition: "alloy", fitRange: false, sortOrder: 62,
  },
  {
    key: "vbo", symbol: "VBO", name: "Valence band offset", canonicalUnit: "eV", acceptedUnits: ENERGY_EV, rangeMin: "-4", rangeMax: "1",
    description: "Energy of the valence-band maximum on a common scale across materials (the scale is named in the revision's notes).",
    temperature: "independent", valleys: [], composition: "alloy", fitRange: false, sortOrder: 70,
  },
  {
    key: "eg_bowing_c0", symbol: "C0", name: "Gap bowing, constant part", canonicalUnit: "eV", acceptedUnits: ENERGY_EV, rangeMin: "-3", rangeMax: "5",
    description: "Constant part of the gap bowing C = C0 + C1·x in Eg(x) = x·Eg(A) + (1 − x)·Eg(B) − x(1 − x)·C, with x the fraction of end member A. C does not depend on temperature.",
    temperature: "independent", valleys: ALL_VALLEYS, composition: "alloy-only", fitRange: false, sortOrder: 80,
  },
  {
    key: "eg_bowing_c1", symbol: "C1", name: "Gap bowing, composition-dependent part", canonicalUnit: "eV", acceptedUnits: ENERGY_EV, rangeMin: "-5", rangeMax: "5",
    description: "Composition-dependent part C1 of the gap bowing C = C0 + C1·x (x the fraction of end member A).",
    temperature: "independent", valleys: ALL_VALLEYS, composition: "alloy-only", fitRange: false, sortOrder: 81,
  },
  {
    key: "potential_un", symbol: "U_n", name: "Fourier coefficient of the crystal potential", canonicalUnit: "eV", acceptedUnits: ENERGY_EV, rangeMin: "-10", rangeMax: "10",
    description: "Coefficient U_n of U(x) = Σ U_n e^{inGx}, G = 2π/a, stated with a band-gap revision (with the period a) for the nearly-free-electron check.",
    temperature: "independent", valleys: [], composition: "none", fitRange: false, storedWith: "eg", sortOrder: 90,
  },
  // V_S(3) carries the pseudopotential check's tolerance (eV): a three-form-factor model is fitted to a few transitions.
  formFactor("ff_vs3", "S", 3, 100, "0.15"),
  formFactor("ff_vs8", "S", 8, 101),
  formFactor("ff_vs11", "S", 11, 102),
  formFactor("ff_va3", "A", 3, 103),
  formFactor("ff_va4", "A", 4, 104),
  formFactor("ff_va11", "A", 11, 105),
];

const BY_KEY = new Map(QUANTITIES.map((q) => [q.key, q]));

export function quantityByKey(key: string): QuantityDefinition | undefined {
  return BY_KEY.get(key);
}

/** Quantities that are kept as records of their own (U_n lives on gap revisions). */
export const RECORD_QUANTITIES = QUANTITIES.filter((q) => !q.storedWith);

/** The row written to the quantities table for a catalogue entry. */
export function quantityRow(q: QuantityDefinition) {
  return {
    key: q.key,
    symbol: q.symbol,
    name: q.name,
    canonicalUnit: q.canonicalUnit,
    acceptedUnits: q.acceptedUnits,
    rangeMin: q.rangeMin,
    rangeMax: q.rangeMax,
    description: q.description,
    dependsOnTemperature: q.temperature !== "independent",
    dependsOnValley: q.valleys.length > 0,
    dependsOnComposition: q.composition === "alloy",
    checkTolerance: q.checkTolerance ?? null,
    sortOrder: q.sortOrder,
  };
}

/** Null when the canonical value lies in the plausible range (inclusive), else the message shown at the field. */
export function checkRange(q: Pick<QuantityDefinition, "rangeMin" | "rangeMax" | "canonicalUnit" | "name">, canonical: string): string | null {
  const v = exactDecimal(canonical).decimal;
  const lo = exactDecimal(q.rangeMin).decimal;
  const hi = exactDecimal(q.rangeMax).decimal;
  if (v.lt(lo) || v.gt(hi)) {
    const unit = displayUnit(q.canonicalUnit);
    return `${canonical}${unit ? ` ${unit}` : ""} is outside the plausible range of ${q.name.toLowerCase()} (${q.rangeMin} to ${q.rangeMax}${unit ? ` ${unit}` : ""}).`;
  }
  return null;
}

export type Conditions = {
  /** Kelvin as an exact decimal string, or null for a 0 K fit parameter or a temperature-independent quantity. */
  temperatureK: string | null;
  valley: Valley | null;
  /** Fraction x of end member A for alloy records, exact decimal string. */
  composition: string | null;
};

/**
 * The normalised conditions of a record, one string per (material, quantity) kept once: "T=300|V=G|x=",
 * "T=fit0|V=G|x=0.3" (a 0 K fit parameter), "T=|V=|x=" (temperature-independent).
 */
export function conditionKey(q: Pick<QuantityDefinition, "temperature">, c: Conditions): string {
  const t = c.temperatureK !== null ? normalisedDecimalKey(c.temperatureK) : q.temperature === "independent" ? "" : "fit0";
  const x = c.composition !== null ? normalisedDecimalKey(c.composition) : "";
  return `T=${t}|V=${c.valley ?? ""}|x=${x}`;
}

export type ConditionInput = { temperatureK?: string | null; valley?: string | null; composition?: string | null };
export type ConditionErrors = Partial<Record<"temperatureK" | "valley" | "composition" | "material", string>>;

/** Checks the conditions a record of this quantity must state for a material of this kind. */
export function validateConditions(
  q: QuantityDefinition,
  materialKind: "element" | "binary" | "alloy",
  input: ConditionInput,
): { ok: true; conditions: Conditions } | { ok: false; errors: ConditionErrors } {
  const errors: ConditionErrors = {};
  const blank = (s: string | null | undefined) => s === undefined || s === null || s.trim() === "";
  let temperatureK: string | null = null;
  if (!blank(input.temperatureK)) {
    if (q.temperature === "fit" || q.temperature === "independent") {
      errors.temperatureK = q.temperature === "fit" ? `${q.name} is a fit parameter: state the fit range on the revision, not a temperature.` : `${q.name} does not depend on temperature.`;
    } else {
      const t = parseExactDecimal(input.temperatureK!);
      if (!t.ok) errors.temperatureK = t.message;
      else if (t.value.decimal.lt(0) || t.value.decimal.gt(5000)) errors.temperatureK = "The temperature must lie between 0 and 5000 K.";
      else if (t.value.decimalPlaces > 3) errors.temperatureK = "State the temperature to at most three decimal places.";
      else temperatureK = t.value.canonical;
    }
  } else if (q.temperature === "stated") {
    errors.temperatureK = `${q.name} is stated at a temperature: enter it in K.`;
  }
  let valley: Valley | null = null;
  if (!blank(input.valley)) {
    const v = input.valley!.trim() === "Γ" ? "G" : input.valley!.trim().toUpperCase();
    if (!q.valleys.includes(v as Valley)) {
      errors.valley = q.valleys.length ? `Choose one of ${q.valleys.map((k) => VALLEY_LABELS[k]).join(", ")}.` : `${q.name} has no valley.`;
    } else valley = v as Valley;
  } else if (q.valleys.length) {
    errors.valley = q.valleys.length === 1 ? `${q.name} is stated at ${VALLEY_LABELS[q.valleys[0]]}.` : "Choose the valley.";
  }
  let composition: string | null = null;
  if (q.composition === "alloy-only" && materialKind !== "alloy") errors.material = `${q.name} belongs to alloys only.`;
  if (q.storedWith) errors.material = `${q.name} is stated with a ${q.storedWith} revision, not as a record of its own.`;
  if (!blank(input.composition)) {
    if (materialKind !== "alloy" || q.composition !== "alloy") errors.composition = q.composition === "alloy-only" ? `${q.name} holds for every composition: leave x empty.` : "Only alloy records state a composition.";
    else {
      const x = parseExactDecimal(input.composition!);
      if (!x.ok) errors.composition = x.message;
      else if (x.value.decimal.lt(0) || x.value.decimal.gt(1)) errors.composition = "The composition x must lie between 0 and 1.";
      else if (x.value.decimalPlaces > 5) errors.composition = "State the composition to at most five decimal places.";
      else composition = x.value.canonical;
    }
  } else if (materialKind === "alloy" && q.composition === "alloy") {
    errors.composition = "An alloy record states its composition x.";
  }
  if (Object.keys(errors).length) return { ok: false, errors };
  return { ok: true, conditions: { temperatureK, valley, composition } };
}

/**
 * How a record's temperature reads on screen: "300 K"; "0 K fit" for the parameters of a temperature fit
 * (Eg(0), α, β); "0 K" for low-temperature parameters (masses, Luttinger parameters); "T-independent".
 */
export function describeTemperature(q: Pick<QuantityDefinition, "temperature" | "fitRange"> | undefined, temperatureK: string | null): string {
  if (temperatureK !== null) return `${normalisedDecimalKey(temperatureK)} K`;
  if (!q || q.temperature === "fit") return "0 K fit";
  if (q.temperature === "independent") return "T-independent";
  return q.fitRange ? "0 K fit" : "0 K";
}

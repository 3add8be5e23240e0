import { toDecimalString } from "./decimal";
import { compareDecimalStrings, normalisedDecimalKey, parseExactDecimal } from "./exact-decimal";
import {
  bowedGapAtTemperature, checkKaneMass, checkNfeGap, CODATA_EDITION, DEFAULT_KANE_RELATIVE_TOLERANCE, DEFAULT_NFE_TOLERANCE_EV,
  varshniGap, verdictFromResidual, type FittedRangeK, type Verdict, type VarshniParameters,
} from "./physics";
import { VALLEY_LABELS, type Valley } from "./quantities";
import { displayUnit } from "./units";

// The check report of one value (a record's current revision, or what a proposal would make it): which of the
// consistency checks apply, what each one took from the ledger, and whether the numbers agree.

export type CheckKind = "range" | "nfe" | "varshni" | "kane" | "bowing";
export type { Verdict };

/** One stated value the checks may use: a record's current revision, or what a proposal would make it. */
export interface CheckValue {
  quantityKey: string;
  valley: Valley | null;
  /** Kelvin as a decimal string; null for a 0 K fit parameter or a temperature-independent quantity. */
  temperatureK: string | null;
  composition: string | null;
  /** Exact decimal in the quantity's canonical unit; null while a proposal has no readable value. */
  value: string | null;
  unit: string;
  recordId: number | null;
  revisionId: number | null;
  sourceLabel: string | null;
  validFromK: string | null;
  validToK: string | null;
  potentialCoefficients?: readonly { n: number; valueEv: string }[] | null;
  periodAngstrom?: string | null;
}

/** What the checks need of a quantity: its symbol, plausible range and tolerance as they stand in the database. */
export interface CheckQuantity {
  key: string;
  symbol: string;
  name: string;
  canonicalUnit: string;
  rangeMin: string | null;
  rangeMax: string | null;
  checkTolerance: string | null;
}

export interface CheckMaterial {
  key: string;
  name: string;
  kind: "element" | "binary" | "alloy";
}

export interface CheckReportInputs {
  /** A record's current revision, or a proposal's value. */
  origin: "record" | "proposal";
  material: CheckMaterial;
  subject: CheckValue;
  /** The material's other current values; one with the subject's record or conditions is replaced by the subject. */
  values: readonly CheckValue[];
  quantities: readonly CheckQuantity[];
  /** Alloys: the end members A (x = 1) and B (x = 0) with their current values, for the bowing check. */
  endMembers?: { a: { material: CheckMaterial; values: readonly CheckValue[] }; b: { material: CheckMaterial; values: readonly CheckValue[] } } | null;
}

export interface CheckInput {
  /** e.g. "Eg(Γ, 0 K)", "α(Γ)", "Ep". */
  symbol: string;
  value: string;
  unit: string;
  recordId: number | null;
  revisionId: number | null;
  /** "subject": the value under check; "registry": another current value; "default": a convention of the check. */
  from: "subject" | "registry" | "default";
  /** Whose value it is when not the checked material's own (an alloy's end member). */
  material: string | null;
  sourceLabel: string | null;
}

export interface CheckFigure {
  label: string;
  value: string;
  unit: string;
}

export interface NfeDetail {
  periodAngstrom: string;
  periodFrom: "revision" | "lattice constant";
  massM0: string;
  gapIndex: number;
  kPiOverA: 0 | 1;
  coefficients: { n: number; valueEv: string }[];
  firstOrder: { gapEv: string; lowerEv: string; upperEv: string };
  centralEquation: { gapEv: string; lowerEv: string; upperEv: string; planeWaves: number; converged: boolean };
}

export interface CheckResult {
  /** Stable within a report, e.g. "varshni:G:300". */
  id: string;
  kind: CheckKind;
  title: string;
  status: Verdict;
  formula: string;
  reference: string;
  inputs: CheckInput[];
  stated: CheckFigure | null;
  computed: CheckFigure[];
  residual: CheckFigure | null;
  tolerance: CheckFigure | null;
  notes: string[];
  codataEdition: string;
  nfe?: NfeDetail;
}

export interface CheckReport {
  origin: "record" | "proposal";
  subject: {
    label: string;
    materialKey: string;
    quantityKey: string;
    value: string | null;
    unit: string;
    recordId: number | null;
    revisionId: number | null;
  };
  /** The worst result: fail over warn over pass; none when no check applied. */
  status: Verdict;
  results: CheckResult[];
  /** Checks that would apply to this value but lack inputs, and what is missing. */
  notRun: { kind: CheckKind; reason: string }[];
  codataEdition: string;
}

/** Default tolerances of the checks where the quantities table states none. */
export const DEFAULT_TOLERANCES = {
  /** Absolute, eV: the NFE, Varshni and bowing checks compare gaps. */
  eg: String(DEFAULT_NFE_TOLERANCE_EV),
  /** Relative (a fraction of the computed mass): the Kane check. */
  me: String(DEFAULT_KANE_RELATIVE_TOLERANCE),
} as const;

/** Which quantity's tolerance each check uses, and how it reads. */
export const TOLERANCE_RULES = [
  { quantityKey: "eg", mode: "absolute", unit: "eV", usedBy: "nearly-free-electron, Varshni and bowing checks", max: "1" },
  { quantityKey: "me", mode: "relative", unit: "", usedBy: "Kane check (a fraction of the computed mass: 0.02 is 2 %)", max: "0.5" },
] as const;

const RANK: Record<Verdict, number> = { none: 0, pass: 1, warn: 2, fail: 3 };

/** The worst of several verdicts; none when there are none. */
export function worstVerdict(verdicts: Iterable<Verdict>): Verdict {
  let worst: Verdict = "none";
  for (const v of verdicts) if (RANK[v] > RANK[worst]) worst = v;
  return worst;
}

const num = (s: string) => Number(s);
const dec = (x: number) => toDecimalString(x);

// Conditions come from the ledger or from a form being typed: one that is not a number compares as written.
function keyOf(s: string): string {
  return parseExactDecimal(s).ok ? normalisedDecimalKey(s) : s.trim();
}

function sameDecimal(a: string | null, b: string | null): boolean {
  if (a === null || b === null) return a === b;
  return keyOf(a) === keyOf(b);
}

function isNumber(s: string | null | undefined): s is string {
  return typeof s === "string" && parseExactDecimal(s).ok;
}

/** "300 K" for a stated temperature, "0 K" for a fit parameter. */
function temperatureLabel(t: string | null): string {
  return t === null ? "0 K" : `${keyOf(t)} K`;
}

function valleyLabel(v: Valley | null): string {
  return v ? VALLEY_LABELS[v] : "";
}

function conditionsText(v: Pick<CheckValue, "valley" | "temperatureK" | "composition">, temperatureDependent: boolean): string {
  const parts = [
    v.composition !== null ? `x = ${keyOf(v.composition)}` : null,
    v.valley ? valleyLabel(v.valley) : null,
    temperatureDependent ? (v.temperatureK === null ? "0 K fit" : temperatureLabel(v.temperatureK)) : null,
  ].filter(Boolean);
  return parts.join(", ");
}

const TEMPERATURE_INDEPENDENT = new Set(["varshni_alpha", "varshni_beta", "lattice_dadt", "delta_so", "ep", "kane_f", "vbo", "eg_bowing_c0", "eg_bowing_c1"]);

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

function sameConditions(a: CheckValue, b: CheckValue): boolean {
  return a.quantityKey === b.quantityKey && a.valley === b.valley && sameDecimal(a.temperatureK, b.temperatureK) && sameDecimal(a.composition, b.composition);
}

function quantityOf(inputs: CheckReportInputs, key: string): CheckQuantity | undefined {
  return inputs.quantities.find((q) => q.key === key);
}

function toleranceOf(inputs: CheckReportInputs, key: keyof typeof DEFAULT_TOLERANCES): number {
  const stated = quantityOf(inputs, key)?.checkTolerance;
  const value = isNumber(stated) ? num(stated) : NaN;
  return value > 0 ? value : num(DEFAULT_TOLERANCES[key]);
}

function symbolOf(inputs: CheckReportInputs, v: Pick<CheckValue, "quantityKey" | "valley" | "temperatureK" | "composition">): string {
  const q = quantityOf(inputs, v.quantityKey);
  const base = q?.symbol ?? v.quantityKey;
  const conditions = conditionsText(v, !TEMPERATURE_INDEPENDENT.has(v.quantityKey));
  return conditions ? `${base}(${conditions})` : base;
}

interface Context {
  inputs: CheckReportInputs;
  subject: CheckValue;
  values: CheckValue[];
}

function inputOf(ctx: Context, v: CheckValue, material: CheckMaterial | null = null): CheckInput {
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

function figure(label: string, value: number | string, unit: string): CheckFigure {
  return { label, value: typeof value === "number" ? dec(value) : value, unit };
}

function baseResult(id: string, kind: CheckKind, title: string, formula: string, reference: string): CheckResult {
  return { id, kind, title, status: "none", formula, reference, inputs: [], stated: null, computed: [], residual: null, tolerance: null, notes: [], codataEdition: CODATA_EDITION };
}

// The physics and the exact decimals refuse what lies outside their domain with a RangeError (T + β ≤ 0, x > 1, a
// value that is not a number). A check reports that as its own failure with the reason, so one odd value in the
// ledger never takes a record or review page down; any other error is a fault of ours and is thrown.
function failOnDomainError(r: CheckResult, error: unknown): CheckResult {
  if (!(error instanceof RangeError)) throw error;
  r.status = "fail";
  r.notes.push(`The check could not run on these inputs: ${error.message}.`);
  return r;
}

function attempt(r: CheckResult, run: () => void): CheckResult {
  try {
    run();
  } catch (e) {
    failOnDomainError(r, e);
  }
  return r;
}

const CHECK_TITLES: Record<CheckKind, string> = {
  range: "Plausible range", nfe: "Nearly-free-electron gap", varshni: "Varshni fit", kane: "Kane mass", bowing: "Bowing",
};

// The whole of one check, for a refusal that comes before it has a result of its own (while choosing its inputs).
function guarded(kind: CheckKind, run: () => CheckResult | CheckResult[] | null): CheckResult[] {
  try {
    const result = run();
    return result === null ? [] : Array.isArray(result) ? result : [result];
  } catch (e) {
    return [failOnDomainError(baseResult(`${kind}:error`, kind, CHECK_TITLES[kind], "", ""), e)];
  }
}

function rangeCheck(ctx: Context): CheckResult | null {
  const { subject } = ctx;
  const q = quantityOf(ctx.inputs, subject.quantityKey);
  if (!q || subject.value === null || (q.rangeMin === null && q.rangeMax === null)) return null;
  const unit = displayUnit(q.canonicalUnit);
  const bounds = `${q.rangeMin ?? "−∞"} ≤ ${q.symbol} ≤ ${q.rangeMax ?? "∞"}${unit ? ` ${unit}` : ""}`;
  const r = baseResult("range", "range", "Plausible range", bounds, `the plausible range of ${q.name.toLowerCase()} in the catalogue`);
  r.inputs.push(inputOf(ctx, subject));
  r.stated = figure(symbolOf(ctx.inputs, subject), subject.value, q.canonicalUnit);
  const value = subject.value;
  return attempt(r, () => {
    const below = q.rangeMin !== null && compareDecimalStrings(value, q.rangeMin) < 0;
    const above = q.rangeMax !== null && compareDecimalStrings(value, q.rangeMax) > 0;
    r.status = below || above ? "fail" : "pass";
    if (below) r.notes.push(`${value} lies below ${q.rangeMin}${unit ? ` ${unit}` : ""}: check the unit and the sign.`);
    if (above) r.notes.push(`${value} lies above ${q.rangeMax}${unit ? ` ${unit}` : ""}: check the unit.`);
  });
}

function nfeCheck(ctx: Context, notRun: CheckReport["notRun"]): CheckResult | null {
  const { subject } = ctx;
  const coefficients = subject.potentialCoefficients ?? [];
  if (subject.quantityKey !== "eg" || coefficients.length === 0 || subject.value === null) return null;
  let periodAngstrom = isNumber(subject.periodAngstrom) ? subject.periodAngstrom : null;
  let periodFrom: NfeDetail["periodFrom"] = "revision";
  let lattice: CheckValue | null = null;
  if (periodAngstrom === null) {
    lattice =
      findCheckValue(ctx.values, "lattice_a", { temperatureK: subject.temperatureK, composition: subject.composition }) ??
      findCheckValue(ctx.values, "lattice_a", { temperatureK: "300", composition: subject.composition });
    if (!lattice) {
      notRun.push({ kind: "nfe", reason: `No period stated with the coefficients, and no lattice constant a of ${ctx.inputs.material.key} at ${temperatureLabel(subject.temperatureK ?? "300")} in the ledger.` });
      return null;
    }
    periodAngstrom = lattice.value!;
    periodFrom = "lattice constant";
  }
  const toleranceEv = toleranceOf(ctx.inputs, "eg");
  const r = baseResult(
    "nfe",
    "nfe",
    "Nearly-free-electron gap",
    "central equation: H_mm′ = (ħ²/2m)(k − mG)² δ_mm′ + U_(m′−m), G = 2π/a, at k = π/a; first order: Eg ≈ 2|U_1|",
    "Kittel ch. 7; Ashcroft & Mermin ch. 9",
  );
  r.inputs.push(inputOf(ctx, subject));
  for (const c of coefficients) {
    r.inputs.push({ symbol: `U_${c.n}`, value: c.valueEv, unit: "eV", recordId: subject.recordId, revisionId: subject.revisionId, from: "subject", material: null, sourceLabel: subject.sourceLabel });
  }
  if (lattice) r.inputs.push(inputOf(ctx, lattice));
  else r.inputs.push({ symbol: "a (period)", value: periodAngstrom, unit: "Å", recordId: subject.recordId, revisionId: subject.revisionId, from: "subject", material: null, sourceLabel: subject.sourceLabel });
  r.inputs.push({ symbol: "m (band mass)", value: "1", unit: "m0", recordId: null, revisionId: null, from: "default", material: null, sourceLabel: null });
  return attempt(r, () => {
    const check = checkNfeGap({
      periodAngstrom: num(periodAngstrom),
      coefficients: coefficients.map((c) => ({ n: c.n, energyEv: num(c.valueEv) })),
      gapIndex: 1,
      statedGapEv: num(subject.value!),
      toleranceEv,
    });
    const central = check.centralEquation;
    r.status = check.verdict;
    r.stated = figure("stated gap", subject.value!, "eV");
    r.computed.push(
      figure("first order 2|U_1|", check.firstOrder.gapEv, "eV"),
      figure(`central equation (${central.planeWaves} plane waves${central.converged ? "" : ", not converged"})`, central.gapEv, "eV"),
    );
    r.residual = check.residualEv === null ? null : figure("stated − central equation", check.residualEv, "eV");
    r.tolerance = figure("absolute", toleranceEv, "eV");
    r.notes.push(...check.notes);
    if (periodFrom === "lattice constant") r.notes.push(`No period was stated with the coefficients: the lattice constant a of ${ctx.inputs.material.key} was used.`);
    r.nfe = {
      periodAngstrom: periodAngstrom!,
      periodFrom,
      massM0: "1",
      gapIndex: check.gapIndex,
      kPiOverA: check.kPiOverA,
      coefficients: coefficients.map((c) => ({ n: c.n, valueEv: c.valueEv })),
      firstOrder: { gapEv: dec(check.firstOrder.gapEv), lowerEv: dec(check.firstOrder.lowerEv), upperEv: dec(check.firstOrder.upperEv) },
      centralEquation: {
        gapEv: dec(central.gapEv),
        lowerEv: dec(central.lowerEv),
        upperEv: dec(central.upperEv),
        planeWaves: central.planeWaves,
        converged: central.converged,
      },
    };
  });
}

interface VarshniFit {
  eg0: CheckValue;
  alpha: CheckValue;
  beta: CheckValue;
  parameters: VarshniParameters;
  range: FittedRangeK | undefined;
}

function fittedRange(values: CheckValue[]): FittedRangeK | undefined {
  let minK = -Infinity;
  let maxK = Infinity;
  for (const v of values) {
    if (isNumber(v.validFromK)) minK = Math.max(minK, num(v.validFromK));
    if (isNumber(v.validToK)) maxK = Math.min(maxK, num(v.validToK));
  }
  if (minK === -Infinity && maxK === Infinity) return undefined;
  return { minK: minK === -Infinity ? 0 : minK, maxK };
}

/** The 0 K Varshni fit (Eg(0), α, β) of a valley at a composition, or null when one of the three is missing. */
export function varshniFitOf(values: readonly CheckValue[], valley: Valley, composition: string | null): VarshniFit | null {
  const eg0 = findCheckValue(values, "eg", { valley, temperatureK: null, composition });
  const alpha = findCheckValue(values, "varshni_alpha", { valley, temperatureK: null, composition });
  const beta = findCheckValue(values, "varshni_beta", { valley, temperatureK: null, composition });
  if (!eg0 || !alpha || !beta) return null;
  const range = fittedRange([eg0, alpha, beta]);
  return {
    eg0, alpha, beta, range,
    parameters: { eg0Ev: num(eg0.value!), alphaMevPerK: num(alpha.value!), betaK: num(beta.value!), fittedRangeK: range },
  };
}

function missingVarshni(values: readonly CheckValue[], valley: Valley, composition: string | null): string[] {
  const missing: string[] = [];
  if (!findCheckValue(values, "eg", { valley, temperatureK: null, composition })) missing.push(`Eg(${valleyLabel(valley)}, 0 K)`);
  if (!findCheckValue(values, "varshni_alpha", { valley, temperatureK: null, composition })) missing.push(`α(${valleyLabel(valley)})`);
  if (!findCheckValue(values, "varshni_beta", { valley, temperatureK: null, composition })) missing.push(`β(${valleyLabel(valley)})`);
  return missing;
}

function varshniChecks(ctx: Context, notRun: CheckReport["notRun"]): CheckResult[] {
  const { subject } = ctx;
  const fitPart = ["varshni_alpha", "varshni_beta"].includes(subject.quantityKey) || (subject.quantityKey === "eg" && subject.temperatureK === null);
  const statedGap = subject.quantityKey === "eg" && subject.temperatureK !== null;
  if ((!fitPart && !statedGap) || subject.valley === null || subject.value === null) return [];
  const fit = varshniFitOf(ctx.values, subject.valley, subject.composition);
  if (!fit) {
    if (statedGap) {
      const missing = missingVarshni(ctx.values, subject.valley, subject.composition);
      // A gap with no fit at all is common (a handbook value); say so only when part of a fit exists.
      if (missing.length < 3) notRun.push({ kind: "varshni", reason: `The 0 K fit of ${ctx.inputs.material.key} is incomplete: ${missing.join(", ")} missing.` });
    } else {
      notRun.push({ kind: "varshni", reason: `The 0 K fit needs ${missingVarshni(ctx.values, subject.valley, subject.composition).join(", ")} as well.` });
    }
    return [];
  }
  const stated = statedGap
    ? [subject]
    : ctx.values.filter((v) => v.quantityKey === "eg" && v.valley === subject.valley && v.temperatureK !== null && v.value !== null && sameDecimal(v.composition, subject.composition));
  if (stated.length === 0) {
    notRun.push({ kind: "varshni", reason: `No gap of ${ctx.inputs.material.key} at ${valleyLabel(subject.valley)} is stated at a temperature to compare the fit with.` });
    return [];
  }
  const toleranceEv = toleranceOf(ctx.inputs, "eg");
  return stated
    .slice()
    .sort((a, b) => num(a.temperatureK!) - num(b.temperatureK!))
    .map((gap) => {
      const t = keyOf(gap.temperatureK!);
      const r = baseResult(`varshni:${subject.valley}:${t}`, "varshni", `Varshni fit at ${t} K`, "Eg(T) = Eg(0) − αT²/(T + β)", "Varshni (1967)");
      r.inputs.push(inputOf(ctx, fit.eg0), inputOf(ctx, fit.alpha), inputOf(ctx, fit.beta), inputOf(ctx, gap));
      r.stated = figure(`stated ${symbolOf(ctx.inputs, gap)}`, gap.value!, "eV");
      r.tolerance = figure("absolute", toleranceEv, "eV");
      if (fit.range) r.notes.push(`Fit range ${fit.range.minK}–${fit.range.maxK} K.`);
      return attempt(r, () => {
        const result = varshniGap(fit.parameters, num(gap.temperatureK!));
        const residual = num(gap.value!) - result.valueEv;
        r.computed.push(figure(`0 K fit at ${t} K`, result.valueEv, "eV"));
        r.residual = figure("stated − fit", residual, "eV");
        // Strict (no warn band): a stated gap and the fit are two statements of one number; see docs/decisions/002.
        r.status = Math.abs(residual) <= toleranceEv ? "pass" : "fail";
        if (result.warning) {
          r.notes.push(`${result.warning}: the fit does not vouch for this temperature.`);
          if (r.status === "pass") r.status = "warn";
        }
      });
    });
}

function kaneCheck(ctx: Context, notRun: CheckReport["notRun"]): CheckResult | null {
  const { subject } = ctx;
  const parts = ["ep", "kane_f", "delta_so", "me"];
  const gapPart = subject.quantityKey === "eg" && subject.valley === "G";
  if ((!parts.includes(subject.quantityKey) && !gapPart) || subject.value === null) return null;
  const x = subject.composition;
  const mass =
    subject.quantityKey === "me"
      ? subject
      : gapPart
        ? findCheckValue(ctx.values, "me", { valley: "G", temperatureK: subject.temperatureK, composition: x })
        : findCheckValue(ctx.values, "me", { valley: "G", temperatureK: null, composition: x }) ??
          ctx.values.find((v) => v.quantityKey === "me" && v.value !== null && sameDecimal(v.composition, x)) ??
          null;
  // A gap takes part only as the gap at the mass's temperature (Eg(0) for a 0 K mass).
  if (gapPart && !mass) return null;
  const gap = mass ? findCheckValue(ctx.values, "eg", { valley: "G", temperatureK: mass.temperatureK, composition: x }) : null;
  if (gapPart && gap !== subject) return null;
  const ep = findCheckValue(ctx.values, "ep", { composition: x });
  const f = findCheckValue(ctx.values, "kane_f", { composition: x });
  const delta = findCheckValue(ctx.values, "delta_so", { composition: x });
  const missing = [
    !ep && "Ep", !f && "F", !delta && "Δso", !mass && "m*e(Γ)",
    mass && !gap && `Eg(Γ, ${temperatureLabel(mass.temperatureK)})`,
  ].filter((m): m is string => Boolean(m));
  if (missing.length) {
    // Only a mass or a Kane parameter invites the check; say what is missing once some of the set exists.
    if (missing.length < 4) notRun.push({ kind: "kane", reason: `The Kane check needs ${missing.join(", ")} of ${ctx.inputs.material.key} as well.` });
    return null;
  }
  const relativeTolerance = toleranceOf(ctx.inputs, "me");
  const r = baseResult("kane", "kane", "Kane mass", "m0/m* = 1 + 2F + Ep(Eg + 2Δso/3)/(Eg(Eg + Δso))", "Kane (1957)");
  r.inputs.push(inputOf(ctx, ep!), inputOf(ctx, f!), inputOf(ctx, gap!), inputOf(ctx, delta!), inputOf(ctx, mass!));
  return attempt(r, () => {
    const check = checkKaneMass({ epEv: num(ep!.value!), f: num(f!.value!), egEv: num(gap!.value!), deltaSoEv: num(delta!.value!), statedMassM0: num(mass!.value!), relativeTolerance });
    r.status = check.verdict;
    r.stated = figure(`stated ${symbolOf(ctx.inputs, mass!)}`, mass!.value!, "m0");
    if (check.massM0 !== null) {
      r.computed.push(figure("Kane m*", check.massM0, "m0"), figure("m0/m*", check.inverseMass, ""));
      r.residual = figure("(stated − Kane)/Kane", check.relativeResidual!, "");
    } else {
      r.computed.push(figure("m0/m*", check.inverseMass, ""));
      r.notes.push("These parameters give a non-positive m0/m*: no mass follows from them.");
    }
    r.tolerance = figure("relative", relativeTolerance, "");
  });
}

function bowingChecks(ctx: Context, notRun: CheckReport["notRun"]): CheckResult[] {
  const { subject, inputs } = ctx;
  if (inputs.material.kind !== "alloy" || subject.value === null || subject.valley === null) return [];
  const bowingPart = subject.quantityKey === "eg_bowing_c0" || subject.quantityKey === "eg_bowing_c1";
  const gapAtX = subject.quantityKey === "eg" && subject.composition !== null;
  if (!bowingPart && !gapAtX) return [];
  const valley = subject.valley;
  const ends = inputs.endMembers;
  const c0 = findCheckValue(ctx.values, "eg_bowing_c0", { valley });
  const c1 = findCheckValue(ctx.values, "eg_bowing_c1", { valley });
  const fitA = ends ? varshniFitOf(ends.a.values, valley, null) : null;
  const fitB = ends ? varshniFitOf(ends.b.values, valley, null) : null;
  const missing = [
    !c0 && `C0(${valleyLabel(valley)})`,
    !ends && "its end members",
    ends && !fitA && `the 0 K fit of ${ends.a.material.key} at ${valleyLabel(valley)}`,
    ends && !fitB && `the 0 K fit of ${ends.b.material.key} at ${valleyLabel(valley)}`,
  ].filter((m): m is string => Boolean(m));
  if (missing.length) {
    notRun.push({ kind: "bowing", reason: `The bowing check of ${inputs.material.key} needs ${missing.join(", ")}.` });
    return [];
  }
  const gaps = gapAtX
    ? [subject]
    : ctx.values.filter((v) => v.quantityKey === "eg" && v.valley === valley && v.composition !== null && v.value !== null);
  if (gaps.length === 0) {
    notRun.push({ kind: "bowing", reason: `No gap of ${inputs.material.key} at ${valleyLabel(valley)} is stated at a composition to compare the bowing with.` });
    return [];
  }
  const toleranceEv = toleranceOf(inputs, "eg");
  return gaps.map((gap) => {
    const x = keyOf(gap.composition!);
    const temperatureK = gap.temperatureK === null ? 0 : num(gap.temperatureK);
    const r = baseResult(
      `bowing:${valley}:${x}:${temperatureK}`,
      "bowing",
      `Bowing at x = ${x}, ${temperatureLabel(gap.temperatureK)}`,
      "Eg(x) = x·Eg(A) + (1 − x)·Eg(B) − x(1 − x)·(C0 + C1·x), end points by Varshni at T",
      "Vurgaftman, Meyer & Ram-Mohan (2001); Varshni (1967)",
    );
    r.inputs.push(inputOf(ctx, gap));
    for (const [end, fit] of [[ends!.a.material, fitA!], [ends!.b.material, fitB!]] as const) {
      r.inputs.push(inputOf(ctx, fit.eg0, end), inputOf(ctx, fit.alpha, end), inputOf(ctx, fit.beta, end));
    }
    r.inputs.push(inputOf(ctx, c0!));
    if (c1) r.inputs.push(inputOf(ctx, c1));
    r.stated = figure(`stated ${symbolOf(inputs, gap)}`, gap.value!, "eV");
    r.tolerance = figure("absolute", toleranceEv, "eV");
    if (!c1) r.notes.push("No C1 in the ledger: C = C0.");
    return attempt(r, () => {
      const result = bowedGapAtTemperature({ a: fitA!.parameters, b: fitB!.parameters, c0Ev: num(c0!.value!), c1Ev: c1 ? num(c1.value!) : 0 }, num(x), temperatureK);
      const residual = num(gap.value!) - result.valueEv;
      r.computed.push(figure(`bowing at x = ${x}`, result.valueEv, "eV"));
      r.residual = figure("stated − bowing", residual, "eV");
      r.status = verdictFromResidual(residual, toleranceEv);
      for (const w of result.warnings) r.notes.push(`${w.replace("end point A", ends!.a.material.key).replace("end point B", ends!.b.material.key)}.`);
      if (result.warnings.length && r.status === "pass") r.status = "warn";
    });
  });
}

function subjectLabel(inputs: CheckReportInputs): string {
  const q = quantityOf(inputs, inputs.subject.quantityKey);
  const conditions = conditionsText(inputs.subject, !TEMPERATURE_INDEPENDENT.has(inputs.subject.quantityKey));
  return `${inputs.material.key} · ${q?.name ?? inputs.subject.quantityKey}${conditions ? ` (${conditions})` : ""}`;
}

/**
 * The consistency checks of one value against the material's other current values: range, nearly-free-electron
 * gap (with stated potential coefficients), Varshni fit against stated gaps, Kane mass, alloy bowing. Pure: it runs
 * on the server and in the browser alike.
 */
export function buildCheckReport(inputs: CheckReportInputs): CheckReport {
  const subject = inputs.subject;
  const values = inputs.values.filter(
    (v) => !(subject.recordId !== null && v.recordId === subject.recordId) && !sameConditions(v, subject),
  );
  if (subject.value !== null) values.push(subject);
  const ctx: Context = { inputs, subject, values };
  const notRun: CheckReport["notRun"] = [];
  const results: CheckResult[] = [];
  if (subject.value !== null) {
    results.push(
      ...guarded("range", () => rangeCheck(ctx)),
      ...guarded("nfe", () => nfeCheck(ctx, notRun)),
      ...guarded("varshni", () => varshniChecks(ctx, notRun)),
      ...guarded("kane", () => kaneCheck(ctx, notRun)),
      ...guarded("bowing", () => bowingChecks(ctx, notRun)),
    );
  }
  return {
    origin: inputs.origin,
    subject: {
      label: subjectLabel(inputs),
      materialKey: inputs.material.key,
      quantityKey: subject.quantityKey,
      value: subject.value,
      unit: subject.unit,
      recordId: subject.recordId,
      revisionId: subject.revisionId,
    },
    status: worstVerdict(results.map((r) => r.status)),
    results,
    notRun,
    codataEdition: CODATA_EDITION,
  };
}

/** What the check-report service and its resource route answer: a report, or why there is none yet. */
export interface CheckReportResponse {
  report: CheckReport | null;
  /** Why some or all checks could not run yet (an unreadable value, no material chosen); null when all is well. */
  message: string | null;
}

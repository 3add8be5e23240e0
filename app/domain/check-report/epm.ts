import type { CheckFigure, CheckInput, CheckMaterial, CheckReport, CheckResult, CheckValue } from "./types";
import { toDecimalString } from "../decimal";
import { normalisedDecimalKey, parseExactDecimal } from "../exact-decimal";
import {
  ANTISYMMETRIC_FORM_FACTOR_KEYS,
  CODATA_EDITION,
  type CrystalStructure,
  FORM_FACTOR_KEYS,
  type FormFactorKey,
  type FormFactors,
  GAP_POINTS,
  type GapPoint,
  type PseudopotentialCheck,
  type PseudopotentialCheckInput,
  SYMMETRIC_FORM_FACTOR_KEYS,
  checkPseudopotential,
} from "../physics";
import type { Valley } from "../quantities";
import { FORM_FACTOR_QUANTITIES, inputOf, toleranceOf, type ConsistencyCheck } from "./shared";
import { EPM_TOLERANCE_QUANTITY } from "./tolerances";

// The pseudopotential check of the registry: a diamond or zinc-blende material's stated form factors and lattice
// constant give its gaps at Γ, X and L (the empirical pseudopotential method of Cohen & Bergstresser, Phys. Rev.
// 141, 789 (1966)), compared with its stated 0 K or low-temperature gaps.

export { EPM_TOLERANCE_QUANTITY, FORM_FACTOR_QUANTITIES };
const FORM_FACTOR_OF_QUANTITY = new Map(FORM_FACTOR_KEYS.map((k) => [FORM_FACTOR_QUANTITIES[k], k]));

/** A stated gap at or below this temperature (or a 0 K fit) is compared; warmer ones are not. */
export const LOW_TEMPERATURE_K = 80;

const VALLEY_OF: Record<GapPoint, Valley> = { gamma: "G", x: "X", l: "L" };
const LABEL: Record<GapPoint, string> = { gamma: "Γ", x: "X", l: "L" };
const REFERENCE = "Cohen & Bergstresser, Phys. Rev. 141, 789 (1966)";
const FORMULA =
  "H_GG′ = (ħ²/2m₀)|k + G|² δ_GG′ + V(G − G′), V(G) = V_S cos(G·τ) + i V_A sin(G·τ), τ = (a/8)(1,1,1); Eg(v) = E5(v) − E4(Γ)";

export interface EpmDetail {
  structure: CrystalStructure;
  latticeAngstrom: string;
  planeWaves: number;
  converged: boolean;
  gaps: Record<GapPoint, string>;
  gammaXMinimum: { gapEv: string; fraction: string };
  fundamental: { gapEv: string; valley: "Γ" | "X" | "L" | "Δ" };
  /** The query string of the crystal check page with the same inputs (/checks/epm?…), for the band structure. */
  query: string;
}

export interface PseudopotentialContext {
  material: CheckMaterial;
  subject: CheckValue;
  /** The material's current values with the subject in place of its own record. */
  values: readonly CheckValue[];
  notRun: CheckReport["notRun"];
  toleranceEv: number;
  /** The report's own reading of a value as a check input (symbol, revision link). */
  inputOf: (value: CheckValue) => CheckInput;
}

// One check diagonalises a few dozen matrices of up to 283 plane waves, and the same material is checked again on
// every record page, review page and keystroke of a proposal: the last results are kept, keyed by every input.
// The function is pure, so a kept result is exact.
const MEMO_SIZE = 64;
const memo = new Map<string, PseudopotentialCheck>();

/** checkPseudopotential with the last results kept (least recently used out first). */
export function memoizedPseudopotentialCheck(input: PseudopotentialCheckInput): PseudopotentialCheck {
  const key = JSON.stringify([
    input.structure,
    input.latticeAngstrom,
    FORM_FACTOR_KEYS.map((k) => input.formFactorsEv[k] ?? null),
    GAP_POINTS.map((p) => input.stated?.[p] ?? null),
    input.toleranceEv ?? null,
    input.convergenceEv ?? null,
    input.maxPlaneWaves ?? null,
    input.bandPoints ?? 0,
  ]);
  const kept = memo.get(key);
  if (kept) {
    memo.delete(key);
    memo.set(key, kept);
    return kept;
  }
  const check = checkPseudopotential(input);
  memo.set(key, check);
  if (memo.size > MEMO_SIZE) memo.delete(memo.keys().next().value!);
  return check;
}

const num = (s: string) => Number(s);
const dec = (x: number) => toDecimalString(x);
const figure = (label: string, value: number | string, unit: string): CheckFigure => ({ label, value: typeof value === "number" ? dec(value) : value, unit });

function current(values: readonly CheckValue[], quantityKey: string): CheckValue | null {
  return values.find((v) => v.quantityKey === quantityKey && v.value !== null && parseExactDecimal(v.value).ok) ?? null;
}

/** The gap a valley is compared with: the 0 K fit Eg(0), else the coldest stated gap at or below LOW_TEMPERATURE_K. */
export function lowTemperatureGap(values: readonly CheckValue[], valley: Valley): CheckValue | null {
  const gaps = values.filter((v) => v.quantityKey === "eg" && v.valley === valley && v.composition === null && v.value !== null && parseExactDecimal(v.value).ok);
  const fit = gaps.find((v) => v.temperatureK === null);
  if (fit) return fit;
  const cold = gaps.filter((v) => num(v.temperatureK!) <= LOW_TEMPERATURE_K).sort((a, b) => num(a.temperatureK!) - num(b.temperatureK!));
  return cold[0] ?? null;
}

/** The lattice constant the check uses: the coldest current a of the material. */
function latticeConstant(values: readonly CheckValue[]): CheckValue | null {
  const rows = values.filter((v) => v.quantityKey === "lattice_a" && v.composition === null && v.value !== null && parseExactDecimal(v.value).ok);
  return rows.sort((a, b) => num(a.temperatureK ?? "0") - num(b.temperatureK ?? "0"))[0] ?? null;
}

function structureOf(material: CheckMaterial): CrystalStructure | null {
  if (material.kind === "alloy") return null;
  if (material.structure === "diamond") return "diamond";
  if (material.structure === "zinc_blende") return "zincblende";
  return null;
}

function crystalQuery(structure: CrystalStructure, latticeAngstrom: string, formFactorsEv: FormFactors, stated: Partial<Record<GapPoint, string>>): string {
  const params = new URLSearchParams({ structure, lattice: latticeAngstrom, unit: "angstrom", ffunit: "ev" });
  for (const key of FORM_FACTOR_KEYS) {
    const value = formFactorsEv[key];
    if (value !== undefined) params.set(key.toLowerCase(), String(value));
  }
  for (const point of GAP_POINTS) if (stated[point]) params.set(point, stated[point]!);
  return params.toString();
}

/**
 * The pseudopotential check where the subject takes part: a form factor or the lattice constant of a diamond or
 * zinc-blende material (all three valleys), or a 0 K or low-temperature gap at Γ, X or L (its own valley).
 */
export function pseudopotentialChecks(ctx: PseudopotentialContext): CheckResult[] {
  const { subject, values, material, notRun } = ctx;
  const ownKey = FORM_FACTOR_OF_QUANTITY.get(subject.quantityKey);
  const gapValley = subject.quantityKey === "eg" && subject.valley !== null && lowTemperatureGap(values, subject.valley) === subject ? subject.valley : null;
  if (!ownKey && !gapValley && subject.quantityKey !== "lattice_a") return [];
  const found = new Map(FORM_FACTOR_KEYS.map((k) => [k, current(values, FORM_FACTOR_QUANTITIES[k])]));
  const anyFormFactor = [...found.values()].some(Boolean);
  if (!anyFormFactor) return [];
  const structure = structureOf(material);
  if (!structure) {
    if (ownKey) {
      const why = material.kind === "alloy" ? "an alloy" : `not a diamond or zinc-blende crystal`;
      notRun.push({ kind: "epm", reason: `The pseudopotential check applies to diamond and zinc-blende crystals; ${material.key} is ${why}.` });
    }
    return [];
  }
  const required = structure === "diamond" ? SYMMETRIC_FORM_FACTOR_KEYS : FORM_FACTOR_KEYS;
  const missing = required.filter((k) => !found.get(k));
  const lattice = latticeConstant(values);
  if (missing.length || !lattice) {
    const parts = [...missing.map((k) => symbolOf(k)), ...(lattice ? [] : ["the lattice constant a"])];
    notRun.push({ kind: "epm", reason: `The pseudopotential check of ${material.key} needs ${parts.join(", ")} as well.` });
    return [];
  }
  const compared = GAP_POINTS.filter((p) => (gapValley ? VALLEY_OF[p] === gapValley : true))
    .map((p) => ({ point: p, gap: lowTemperatureGap(values, VALLEY_OF[p]) }))
    .filter((c): c is { point: GapPoint; gap: CheckValue } => c.gap !== null);
  if (compared.length === 0) {
    notRun.push({
      kind: "epm",
      reason: `No 0 K or low-temperature (≤ ${LOW_TEMPERATURE_K} K) gap of ${material.key} at Γ, X or L to compare the form factors with; room-temperature gaps are not compared.`,
    });
    return [];
  }

  const formFactorsEv: FormFactors = {};
  const formFactorInputs: CheckInput[] = [];
  for (const key of FORM_FACTOR_KEYS) {
    const v = found.get(key);
    if (!v) continue;
    formFactorsEv[key] = num(v.value!);
    formFactorInputs.push(ctx.inputOf(v));
  }
  const strayAntisymmetric = structure === "diamond" ? ANTISYMMETRIC_FORM_FACTOR_KEYS.filter((k) => formFactorsEv[k] !== undefined && formFactorsEv[k] !== 0) : [];
  const stated: Partial<Record<GapPoint, number>> = {};
  for (const c of compared) stated[c.point] = num(c.gap.value!);
  const latticeAngstrom = lattice.value!;

  const result = (c: { point: GapPoint; gap: CheckValue }): CheckResult => ({
    id: `epm:${VALLEY_OF[c.point]}`,
    kind: "epm",
    title: `Pseudopotential gap at ${LABEL[c.point]}`,
    status: "none",
    formula: FORMULA,
    reference: REFERENCE,
    inputs: [ctx.inputOf(c.gap), ...formFactorInputs, ctx.inputOf(lattice)],
    stated: figure(`stated ${ctx.inputOf(c.gap).symbol}`, c.gap.value!, "eV"),
    computed: [],
    residual: null,
    tolerance: figure("absolute", ctx.toleranceEv, "eV"),
    notes: [],
    codataEdition: CODATA_EDITION,
  });

  if (strayAntisymmetric.length) {
    return compared.map((c) => {
      const r = result(c);
      r.status = "fail";
      r.notes.push(`${material.key} is a diamond crystal (one kind of atom), so ${strayAntisymmetric.map(symbolOf).join(", ")} cannot be nonzero.`);
      return r;
    });
  }

  let check: PseudopotentialCheck;
  try {
    check = memoizedPseudopotentialCheck({ structure, latticeAngstrom: num(latticeAngstrom), formFactorsEv, stated, toleranceEv: ctx.toleranceEv });
  } catch (e) {
    if (!(e instanceof RangeError)) throw e;
    return compared.map((c) => {
      const r = result(c);
      r.status = "fail";
      r.notes.push(`The check could not run on these inputs: ${e.message}.`);
      return r;
    });
  }
  const detail: EpmDetail = {
    structure,
    latticeAngstrom,
    planeWaves: check.planeWaves,
    converged: check.converged,
    gaps: { gamma: dec(check.gaps.gamma.gapEv), x: dec(check.gaps.x.gapEv), l: dec(check.gaps.l.gapEv) },
    gammaXMinimum: { gapEv: dec(check.gammaXMinimum.gapEv), fraction: dec(check.gammaXMinimum.fraction) },
    fundamental: { gapEv: dec(check.fundamental.gapEv), valley: check.fundamental.valley },
    query: crystalQuery(structure, latticeAngstrom, formFactorsEv, Object.fromEntries(compared.map((c) => [c.point, c.gap.value!]))),
  };
  const latticeNote = `a = ${latticeAngstrom} Å, the lattice constant at ${lattice.temperatureK === null ? "0 K" : `${normalisedDecimalKey(lattice.temperatureK)} K`}; form factors fitted with another a move the gaps by about twice the relative difference of the kinetic energies.`;
  return compared.map((c, i) => {
    const r = result(c);
    const g = check.gaps[c.point];
    r.status = g.verdict;
    r.computed.push(figure(`E5(${LABEL[c.point]}) − E4(Γ), ${check.planeWaves} plane waves`, g.gapEv, "eV"));
    if (c.point === "x") r.computed.push(figure(`lowest along Γ–X (at ${check.gammaXMinimum.fraction.toFixed(2)})`, check.gammaXMinimum.gapEv, "eV"));
    r.residual = g.residualEv === null ? null : figure("stated − computed", g.residualEv, "eV");
    r.notes.push(...check.notes.filter((n) => c.point === "x" || !n.includes("X gap")));
    if (i === 0) r.notes.push(latticeNote);
    r.epm = detail;
    return r;
  });
}

function symbolOf(key: FormFactorKey): string {
  return `${key.startsWith("S") ? "V_S" : "V_A"}(${key.slice(1)})`;
}

/** The pseudopotential check behind the report (CHECKS). */
export const epmCheck: ConsistencyCheck = {
  kind: "epm",
  title: "Pseudopotential gaps",
  run: (ctx, notRun) =>
    pseudopotentialChecks({
      material: ctx.inputs.material, subject: ctx.subject, values: ctx.values, notRun,
      toleranceEv: toleranceOf(ctx.inputs, EPM_TOLERANCE_QUANTITY), inputOf: (v) => inputOf(ctx, v),
    }),
};

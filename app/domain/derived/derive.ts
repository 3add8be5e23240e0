import { findCheckValue, varshniFitOf, type CheckMaterial, type CheckValue } from "../check-report";
import { toDecimalString } from "../decimal";
import { normalisedDecimalKey } from "../exact-decimal";
import {
  bowedGapEv, bowedGapSensitivities, bowingCurveAtTemperature, CODATA_EDITION, crossoverComposition, kaneInverseMass, kaneMassM0, kaneMassSensitivities,
  latticeAtTemperature, latticeAtTemperatureSensitivities, latticeMatchedComposition, latticeMatchedCompositionSensitivities, latticeMismatch,
  varshniGap, varshniGapSensitivities, vegardLatticeAngstrom, vegardSensitivities, type BowingCurve, type VarshniParameters,
} from "../physics";
import { VALLEY_KEYS, VALLEY_LABELS, type Valley } from "../quantities";
import { combine, stated as statedInput, uncertaintyOf, type CombinedUncertainty, type DerivedInput, type Propagated, type SourceInput } from "./uncertainty";

// Derived values of one material at a temperature (and composition, for an alloy), each with its formula, the
// revisions it came from, its GUM uncertainty budget and what could not be derived. Pure and shared: the material
// page feeds it current revisions, a release evaluation the pinned revisions of a frozen release.

export interface DerivedMaterial extends CheckMaterial {
  formula: string;
  compositionVariable: string | null;
}

export interface MaterialValues {
  material: CheckMaterial;
  values: readonly CheckValue[];
}

export interface DerivedInputs {
  material: DerivedMaterial;
  values: readonly CheckValue[];
  /** Alloys: end member A (x = 1) and B (x = 0) with their values. */
  endMembers: { a: MaterialValues; b: MaterialValues } | null;
  /** Candidate substrates (binaries and elements with a lattice constant at 300 K). */
  substrates: readonly MaterialValues[];
  /** Where the values come from, as messages name it: "in the ledger" (current revisions, the default) or "in the release". */
  where?: string;
}

export interface DerivedRequest {
  temperatureK: number;
  /** Alloys only; the fraction of end member A. Null: the lattice match to the substrate, else 0.3. */
  composition: number | null;
  substrateKey: string | null;
  /** With no substrate asked for: pick one (the material page) or derive nothing that needs one (a release evaluation). */
  defaultSubstrate: boolean;
  /**
   * A missing bowing parameter (or, for the Kane mass of an alloy, the interpolation of Ep, F and Δso) is taken as a
   * straight line between the end members only when the caller asks; otherwise the value is named as missing.
   */
  linearWhereBowingMissing: boolean;
}

export interface DerivedNumber {
  /** eg-G, eg-X, eg-L, lattice-a, kane-me, mismatch, lattice-match-x. */
  id: string;
  label: string;
  value: string;
  unit: string;
  formula: string;
  reference: string;
  /** The revisions it came from, each with its stated uncertainty and sensitivity coefficient (the GUM budget). */
  inputs: DerivedInput[];
  uncertainty: CombinedUncertainty;
  warnings: string[];
  /** A value stated at exactly these conditions, shown beside the derived one. */
  stated: { value: string; uncertainty: string | null; recordId: number | null; revisionId: number | null } | null;
}

export interface DerivedNumbers {
  material: DerivedMaterial;
  temperatureK: number;
  composition: number | null;
  gaps: DerivedNumber[];
  lattice: DerivedNumber | null;
  kaneMass: DerivedNumber | null;
  /** (a_layer − a_substrate)/a_substrate at T, in per cent. */
  mismatch: DerivedNumber | null;
  /** Alloys: the composition whose a(T) equals the substrate's. */
  matchedComposition: DerivedNumber | null;
  /** What could not be derived, and why. */
  missing: string[];
  substrates: { key: string; name: string }[];
  substrateKey: string | null;
  codataEdition: string;
}

/** Every derived number in the order tables and exports list them. */
export function derivedNumbersOf(d: Pick<DerivedNumbers, "gaps" | "lattice" | "kaneMass" | "mismatch" | "matchedComposition">): DerivedNumber[] {
  return [...d.gaps, d.lattice, d.kaneMass, d.mismatch, d.matchedComposition].filter((n): n is DerivedNumber => n !== null);
}

const dec = (x: number) => toDecimalString(x);
const num = (s: string) => Number(s);

function sourceOf(v: CheckValue, symbol: string, owner: CheckMaterial | null): SourceInput {
  return {
    symbol, value: v.value!, unit: v.unit, recordId: v.recordId, revisionId: v.revisionId, from: "registry", material: owner?.key ?? null,
    sourceLabel: v.sourceLabel, uncertainty: v.uncertainty ?? null,
  };
}

const term = (v: CheckValue, symbol: string, owner: CheckMaterial | null): Propagated => statedInput(sourceOf(v, symbol, owner));

function tLabel(t: number): string {
  return `${Number(t.toPrecision(8))} K`;
}

function statedAt(values: readonly CheckValue[], quantityKey: string, c: { valley?: Valley | null; temperatureK: number | null; composition: number | null }): DerivedNumber["stated"] {
  const found = findCheckValue(values, quantityKey, {
    valley: c.valley ?? null,
    temperatureK: c.temperatureK === null ? null : String(c.temperatureK),
    composition: c.composition === null ? null : String(c.composition),
  });
  return found ? { value: found.value!, uncertainty: found.uncertainty ?? null, recordId: found.recordId, revisionId: found.revisionId } : null;
}

function numberOf(base: Omit<DerivedNumber, "value" | "inputs" | "uncertainty">, p: Propagated, scale = 1): DerivedNumber {
  const scaled = scale === 1 ? p : combine(p.value * scale, [[p, scale]]);
  const { inputs, uncertainty } = uncertaintyOf(scaled);
  return { ...base, value: dec(scaled.value), inputs, uncertainty };
}

const VARSHNI_FORMULA = "Eg(T) = Eg(0) − αT²/(T + β)";
const BOWING_FORMULA = "Eg(x) = x·Eg_A(T) + (1 − x)·Eg_B(T) − x(1 − x)·(C0 + C1·x), Eg_A, Eg_B by Varshni at T";
const KANE_FORMULA = "m0/m* = 1 + 2F + Ep(Eg + 2Δso/3)/(Eg(Eg + Δso)), Eg = Eg(Γ) at T";

// Eg(T) by Varshni, propagated from Eg(0), α, β.
function varshniPropagated(fit: NonNullable<ReturnType<typeof varshniFitOf>>, valley: Valley, owner: CheckMaterial | null, t: number): { p: Propagated; warning: string | null } {
  const v = VALLEY_LABELS[valley];
  const result = varshniGap(fit.parameters, t);
  const s = varshniGapSensitivities(fit.parameters, t);
  const p = combine(result.valueEv, [
    [term(fit.eg0, `Eg(${v}, 0 K)`, owner), s.eg0],
    [term(fit.alpha, `α(${v})`, owner), s.alphaMevPerK],
    [term(fit.beta, `β(${v})`, owner), s.betaK],
  ]);
  return { p, warning: result.warning };
}

interface LatticeAt {
  p: Propagated;
  warnings: string[];
  usedSlope: boolean;
}

// a(T) = a(300 K) + (T − 300 K)·da/dT where da/dT is known; else a(300 K) itself, with a warning away from 300 K.
function latticeOf(values: readonly CheckValue[], owner: CheckMaterial, temperatureK: number): LatticeAt | null {
  const a300 = findCheckValue(values, "lattice_a", { temperatureK: "300", composition: null });
  if (!a300) return null;
  const slope = findCheckValue(values, "lattice_dadt", { composition: null });
  const base = term(a300, "a(300 K)", owner);
  if (!slope) {
    const warnings = temperatureK === 300 ? [] : [`no da/dT of ${owner.key} in the ledger: a(300 K) used at ${tLabel(temperatureK)}`];
    return { p: base, warnings, usedSlope: false };
  }
  const range = slope.validFromK !== null || slope.validToK !== null
    ? { minK: slope.validFromK !== null ? num(slope.validFromK) : 0, maxK: slope.validToK !== null ? num(slope.validToK) : Infinity }
    : undefined;
  const result = latticeAtTemperature({ a300Angstrom: num(a300.value!), daDtAngstromPerK: num(slope.value!), fittedRangeK: range }, temperatureK);
  const s = latticeAtTemperatureSensitivities(temperatureK);
  const p = combine(result.valueAngstrom, [[base, s.a300], [term(slope, "da/dT", owner), s.daDt]]);
  return { p, warnings: result.warning ? [`da/dT of ${owner.key}: ${result.warning}`] : [], usedSlope: true };
}

interface AlloyValley {
  /** The bowing curve at a temperature (values only: the plots). */
  curveAt: (temperatureK: number) => BowingCurve & { warnings: string[] };
  /** Eg at (x, T), propagated from the end points' Varshni parameters and the bowing parameters. */
  at: (x: number, temperatureK: number) => { p: Propagated; warnings: string[] };
  notes: string[];
}

function alloyValley(input: DerivedInputs, valley: Valley, linear: boolean): AlloyValley | string {
  const ends = input.endMembers!;
  const fitA = varshniFitOf(ends.a.values, valley, null);
  const fitB = varshniFitOf(ends.b.values, valley, null);
  const v = VALLEY_LABELS[valley];
  if (!fitA || !fitB) {
    const lacking = [!fitA && ends.a.material.key, !fitB && ends.b.material.key].filter(Boolean).join(" and ");
    return `Eg(${v}): ${lacking} ${lacking.includes(" and ") ? "have" : "has"} no 0 K Varshni fit at ${v} in the ledger.`;
  }
  const c0 = findCheckValue(input.values, "eg_bowing_c0", { valley });
  const c1 = findCheckValue(input.values, "eg_bowing_c1", { valley });
  if (!c0 && !linear) return `Eg(${v}): no bowing parameter of ${input.material.key} at ${v} in the ledger (ask for linear interpolation to take C = 0).`;
  const notes = c0 ? [] : [`no bowing parameter at ${v} in the ledger: interpolated linearly (C = 0)`];
  const parameters = { a: fitA.parameters, b: fitB.parameters, c0Ev: c0 ? num(c0.value!) : 0, c1Ev: c1 ? num(c1.value!) : 0 };
  return {
    curveAt: (t) => bowingCurveAtTemperature(parameters, t),
    at(x, t) {
      const curve = bowingCurveAtTemperature(parameters, t);
      const a = varshniPropagated(fitA, valley, ends.a.material, t);
      const b = varshniPropagated(fitB, valley, ends.b.material, t);
      const s = bowedGapSensitivities(x);
      const parts: [Propagated, number][] = [[a.p, s.egA], [b.p, s.egB]];
      if (c0) parts.push([term(c0, `C0(${v})`, null), s.c0]);
      if (c1) parts.push([term(c1, `C1(${v})`, null), s.c1]);
      return { p: combine(bowedGapEv(curve, x), parts), warnings: curve.warnings };
    },
    notes,
  };
}

function kaneFromParts(parts: { ep: Propagated; f: Propagated; deltaSo: Propagated; eg: Propagated }): Propagated | string {
  const p = { epEv: parts.ep.value, f: parts.f.value, egEv: parts.eg.value, deltaSoEv: parts.deltaSo.value };
  try {
    const inverse = kaneInverseMass(p);
    if (!(inverse > 0)) return `the Kane formula gives m0/m* = ${dec(inverse)}, not a positive mass`;
    const s = kaneMassSensitivities(p);
    return combine(kaneMassM0(p), [[parts.ep, s.ep], [parts.f, s.f], [parts.eg, s.eg], [parts.deltaSo, s.deltaSo]]);
  } catch (e) {
    if (e instanceof RangeError) return e.message;
    throw e;
  }
}

const KANE_KEYS = [["ep", "Ep"], ["kane_f", "F"], ["delta_so", "Δso"]] as const;

function kaneParameters(values: readonly CheckValue[], owner: CheckMaterial): { parts: { ep: CheckValue; f: CheckValue; deltaSo: CheckValue } } | { lacking: string[] } {
  const found = KANE_KEYS.map(([key]) => findCheckValue(values, key, {}));
  const lacking = KANE_KEYS.filter((_, i) => !found[i]).map(([, symbol]) => symbol);
  if (lacking.length) return { lacking: lacking.map((s) => `${owner.key} ${s}`) };
  return { parts: { ep: found[0]!, f: found[1]!, deltaSo: found[2]! } };
}

/** The first substrate whose lattice match falls strictly inside the alloy, else end member B. */
function pickSubstrate(input: DerivedInputs, match: (key: string) => number | null): string | null {
  for (const s of input.substrates) {
    const x = match(s.material.key);
    if (x !== null && x > 0 && x < 1) return s.material.key;
  }
  return input.endMembers?.b.material.key ?? input.substrates[0]?.material.key ?? null;
}

function mismatchNumber(layer: LatticeAt, layerLabel: string, substrate: LatticeAt, substrateKey: string, t: number): DerivedNumber {
  const m = latticeMismatch(layer.p.value, substrate.p.value);
  const p = combine(m.value, [[layer.p, m.sensitivities.layer], [substrate.p, m.sensitivities.substrate]]);
  return numberOf({
    id: "mismatch", label: `Δa/a on ${substrateKey} (${layerLabel}, ${tLabel(t)})`, unit: "%",
    formula: "Δa/a = (a_layer(T) − a_substrate(T))/a_substrate(T)", reference: "lattice mismatch (common practice)",
    warnings: [...layer.warnings, ...substrate.warnings], stated: null,
  }, p, 100);
}

/** Derived gaps at Γ, X, L, the lattice constant, the Kane mass and, on a substrate, the mismatch (and an alloy's lattice match). */
export function deriveValues(input: DerivedInputs, request: DerivedRequest): DerivedNumbers {
  const { internals: _internals, ...numbers } = deriveWithInternals(input, request);
  return numbers;
}

// Messages say where a value was looked for: the ledger's current revisions, or the pinned ones of a release.
function rephrased<T extends DerivedNumbers>(data: T, where: string | undefined): T {
  if (!where || where === "in the ledger") return data;
  const say = (m: string) => m.replaceAll("in the ledger", where);
  for (const n of derivedNumbersOf(data)) n.warnings = n.warnings.map(say);
  data.missing = data.missing.map(say);
  return data;
}

type Internals = { valleys: { valley: Valley; model: AlloyValley }[]; matchX: number | null };

function deriveWithInternals(input: DerivedInputs, request: DerivedRequest): DerivedNumbers & { internals: Internals } {
  return rephrased(deriveUnphrased(input, request), input.where);
}

function deriveUnphrased(input: DerivedInputs, request: DerivedRequest): DerivedNumbers & { internals: Internals } {
  const { material } = input;
  const t = request.temperatureK;
  const alloy = material.kind === "alloy" && input.endMembers !== null;
  const missing: string[] = [];
  const substrates = input.substrates.filter((s) => s.material.key !== material.key).map((s) => ({ key: s.material.key, name: s.material.name }));
  const internals: Internals = { valleys: [], matchX: null };
  const data: DerivedNumbers & { internals: Internals } = {
    material, temperatureK: t, composition: null, gaps: [], lattice: null, kaneMass: null, mismatch: null, matchedComposition: null, missing,
    substrates, substrateKey: null, codataEdition: CODATA_EDITION, internals,
  };
  const substrateLattice = (key: string) => {
    const s = input.substrates.find((m) => m.material.key === key);
    return s ? latticeOf(s.values, s.material, t) : null;
  };
  const asked = request.substrateKey && substrates.some((s) => s.key === request.substrateKey) ? request.substrateKey : null;

  if (!alloy) {
    if (material.kind === "alloy") {
      missing.push(`${material.key} has no end members in the ledger: nothing can be derived for it.`);
      return data;
    }
    let gammaGap: Propagated | null = null;
    for (const valley of VALLEY_KEYS) {
      const v = VALLEY_LABELS[valley];
      const fit = varshniFitOf(input.values, valley, null);
      if (!fit) {
        const eg0 = findCheckValue(input.values, "eg", { valley, temperatureK: null });
        if (eg0) missing.push(`Eg(${v}): only Eg(0) = ${eg0.value} eV is in the ledger; its α and β are missing.`);
        continue;
      }
      const { p, warning } = varshniPropagated(fit, valley, null, t);
      if (valley === "G") gammaGap = p;
      data.gaps.push(numberOf({
        id: `eg-${valley}`, label: `Eg(${v}, ${tLabel(t)})`, unit: "eV", formula: VARSHNI_FORMULA, reference: "Varshni (1967)",
        warnings: warning ? [warning] : [], stated: statedAt(input.values, "eg", { valley, temperatureK: t, composition: null }),
      }, p));
    }
    const lattice = latticeOf(input.values, material, t);
    if (lattice) {
      data.lattice = numberOf({
        id: "lattice-a", label: `a(${tLabel(t)})`, unit: "Å",
        formula: lattice.usedSlope ? "a(T) = a(300 K) + (T − 300 K)·da/dT" : "a(300 K) as stated", reference: lattice.usedSlope ? "linear thermal expansion" : "the ledger",
        warnings: lattice.warnings, stated: statedAt(input.values, "lattice_a", { temperatureK: t, composition: null }),
      }, lattice.p);
    } else {
      missing.push(`a: no lattice constant of ${material.key} at 300 K in the ledger.`);
    }
    const kane = kaneParameters(input.values, material);
    const anyKane = KANE_KEYS.some(([key]) => findCheckValue(input.values, key, {}));
    if ("parts" in kane && gammaGap) {
      const p = kaneFromParts({ ep: term(kane.parts.ep, "Ep", null), f: term(kane.parts.f, "F", null), deltaSo: term(kane.parts.deltaSo, "Δso", null), eg: gammaGap });
      if (typeof p === "string") missing.push(`m*e(Γ): ${p}.`);
      else data.kaneMass = numberOf({
        id: "kane-me", label: `m*e(Γ, ${tLabel(t)})`, unit: "m0", formula: KANE_FORMULA, reference: "Kane (1957)", warnings: [],
        stated: statedAt(input.values, "me", { valley: "G", temperatureK: t === 0 ? null : t, composition: null }),
      }, p);
    } else if (anyKane || "parts" in kane) {
      const lacking = [...("lacking" in kane ? kane.lacking : []), ...(gammaGap ? [] : [`${material.key} Varshni fit at Γ`])];
      missing.push(`m*e(Γ) by the Kane formula: ${lacking.join(", ")} missing.`);
    }
    const substrateKey = asked;
    data.substrateKey = substrateKey;
    if (substrateKey && lattice) {
      const s = substrateLattice(substrateKey);
      if (s) data.mismatch = mismatchNumber(lattice, material.key, s, substrateKey, t);
    }
    return data;
  }

  const ends = input.endMembers!;
  const valleys = VALLEY_KEYS.map((valley) => ({ valley, model: alloyValley(input, valley, request.linearWhereBowingMissing) }));
  for (const { model } of valleys) if (typeof model === "string") missing.push(model);
  internals.valleys = valleys.filter((v): v is { valley: Valley; model: AlloyValley } => typeof v.model !== "string");

  const latticeA = latticeOf(ends.a.values, ends.a.material, t);
  const latticeB = latticeOf(ends.b.values, ends.b.material, t);
  const matchWith = (key: string) => {
    const s = substrateLattice(key);
    return s && latticeA && latticeB ? latticeMatchedComposition({ aAAngstrom: latticeA.p.value, aBAngstrom: latticeB.p.value }, s.p.value) : null;
  };
  const substrateKey = asked ?? (request.defaultSubstrate ? pickSubstrate(input, matchWith) : null);
  data.substrateKey = substrateKey;
  const matchX = substrateKey ? matchWith(substrateKey) : null;
  internals.matchX = matchX;
  const x = request.composition ?? (matchX !== null && matchX > 0 && matchX < 1 ? Number(matchX.toFixed(3)) : 0.3);
  data.composition = x;
  const xText = normalisedDecimalKey(String(x));

  let gammaGap: Propagated | null = null;
  for (const { valley, model } of internals.valleys) {
    const v = VALLEY_LABELS[valley];
    const { p, warnings } = model.at(x, t);
    if (valley === "G") gammaGap = p;
    data.gaps.push(numberOf({
      id: `eg-${valley}`, label: `Eg(${v}, x = ${xText}, ${tLabel(t)})`, unit: "eV", formula: BOWING_FORMULA,
      reference: "Vurgaftman, Meyer & Ram-Mohan (2001); Varshni (1967)", warnings: [...model.notes, ...warnings],
      stated: statedAt(input.values, "eg", { valley, temperatureK: t, composition: x }),
    }, p));
  }

  let alloyLattice: LatticeAt | null = null;
  if (latticeA && latticeB) {
    const s = vegardSensitivities(x);
    const p = combine(vegardLatticeAngstrom({ aAAngstrom: latticeA.p.value, aBAngstrom: latticeB.p.value }, x), [[latticeA.p, s.aA], [latticeB.p, s.aB]]);
    alloyLattice = { p, warnings: [...latticeA.warnings, ...latticeB.warnings], usedSlope: latticeA.usedSlope || latticeB.usedSlope };
    data.lattice = numberOf({
      id: "lattice-a", label: `a(x = ${xText}, ${tLabel(t)})`, unit: "Å",
      formula: "a(x) = x·a_A(T) + (1 − x)·a_B(T), a(T) = a(300 K) + (T − 300 K)·da/dT", reference: "Vegard (1921)",
      warnings: alloyLattice.warnings, stated: statedAt(input.values, "lattice_a", { temperatureK: t, composition: x }),
    }, p);
  } else {
    missing.push(`a: ${[!latticeA && ends.a.material.key, !latticeB && ends.b.material.key].filter(Boolean).join(" and ")} without a lattice constant at 300 K in the ledger.`);
  }

  // The Kane mass of an alloy: Ep, F and Δso have no bowing parameters in the catalogue, so only a linear interpolation
  // of the end members' values gives them, and only when the caller asks for it.
  const kaneA = kaneParameters(ends.a.values, ends.a.material);
  const kaneB = kaneParameters(ends.b.values, ends.b.material);
  if ("parts" in kaneA && "parts" in kaneB && gammaGap) {
    if (!request.linearWhereBowingMissing) {
      missing.push(`m*e(Γ) by the Kane formula: no bowing of Ep, F and Δso in the ledger (ask for linear interpolation to interpolate them).`);
    } else {
      const s = vegardSensitivities(x);
      const lin = (key: "ep" | "f" | "deltaSo", symbol: string) => {
        const a = term(kaneA.parts[key], symbol, ends.a.material);
        const b = term(kaneB.parts[key], symbol, ends.b.material);
        return combine(x * a.value + (1 - x) * b.value, [[a, s.aA], [b, s.aB]]);
      };
      const p = kaneFromParts({ ep: lin("ep", "Ep"), f: lin("f", "F"), deltaSo: lin("deltaSo", "Δso"), eg: gammaGap });
      if (typeof p === "string") missing.push(`m*e(Γ): ${p}.`);
      else data.kaneMass = numberOf({
        id: "kane-me", label: `m*e(Γ, x = ${xText}, ${tLabel(t)})`, unit: "m0", formula: `${KANE_FORMULA}; Ep, F, Δso interpolated linearly in x`,
        reference: "Kane (1957)", warnings: ["Ep, F and Δso interpolated linearly between the end members, as asked"],
        stated: statedAt(input.values, "me", { valley: "G", temperatureK: t === 0 ? null : t, composition: x }),
      }, p);
    }
  } else {
    const lacking = [...("lacking" in kaneA ? kaneA.lacking : []), ...("lacking" in kaneB ? kaneB.lacking : []), ...(gammaGap ? [] : ["the Γ gap of the alloy"])];
    missing.push(`m*e(Γ) by the Kane formula: ${lacking.join(", ")} missing.`);
  }

  if (substrateKey) {
    const s = substrateLattice(substrateKey);
    if (s && alloyLattice) data.mismatch = mismatchNumber(alloyLattice, `x = ${xText}`, s, substrateKey, t);
    if (s && latticeA && latticeB) {
      if (latticeA.p.value === latticeB.p.value) {
        missing.push(`x on ${substrateKey}: the end members have the same lattice constant.`);
      } else {
        const pair = { aAAngstrom: latticeA.p.value, aBAngstrom: latticeB.p.value };
        const xs = (s.p.value - pair.aBAngstrom) / (pair.aAAngstrom - pair.aBAngstrom);
        const sens = latticeMatchedCompositionSensitivities(pair, s.p.value);
        const inside = xs >= 0 && xs <= 1;
        data.matchedComposition = numberOf({
          id: "lattice-match-x", label: `x lattice-matched to ${substrateKey} (${tLabel(t)})`, unit: "1",
          formula: "x = (a_substrate(T) − a_B(T))/(a_A(T) − a_B(T))", reference: "Vegard (1921)",
          warnings: [...(inside ? [] : [`no composition 0 ≤ x ≤ 1 of ${material.key} matches ${substrateKey}`]), ...latticeA.warnings, ...latticeB.warnings, ...s.warnings],
          stated: null,
        }, combine(xs, [[latticeA.p, sens.aA], [latticeB.p, sens.aB], [s.p, sens.substrate]]));
      }
    }
  }
  return data;
}

export interface DerivedSeries<P> {
  label: string;
  points: P[];
}

export interface DerivedValuesData extends DerivedNumbers {
  temperaturePlot: {
    series: DerivedSeries<{ temperatureK: number; valueEv: number }>[];
    fittedRangeK: { minK: number; maxK: number } | null;
    markerK: number;
  } | null;
  alloyPlot: {
    compositionLabel: string;
    series: DerivedSeries<{ x: number; valueEv: number }>[];
    crossovers: { valley: "X" | "L"; x: number | null; valueEv: number | null }[];
    /** The first indirect crossing of the Γ gap, marked on the plot. */
    crossover: { x: number; valueEv: number; label: string } | null;
    latticeMatch: { x: number | null; substrateKey: string; substrateAngstrom: string; label: string | null; note: string | null } | null;
  } | null;
}

function temperatureAxis(temperatureK: number, fitMaxK: number | null): number[] {
  const top = Math.ceil(Math.max(500, temperatureK * 1.25, fitMaxK !== null && isFinite(fitMaxK) ? fitMaxK : 0) / 100) * 100;
  return Array.from({ length: 101 }, (_, i) => (top * i) / 100);
}

const COMPOSITIONS = Array.from({ length: 51 }, (_, i) => i / 50);

function fitParameters(values: readonly CheckValue[], valley: Valley): { parameters: VarshniParameters; range: { minK: number; maxK: number } | undefined } | null {
  const fit = varshniFitOf(values, valley, null);
  return fit ? { parameters: fit.parameters, range: fit.range } : null;
}

/** The derived numbers of a material page with its plots: Eg(T) and, for an alloy, Eg(x) with crossovers and the lattice match. */
export function deriveMaterialValues(input: DerivedInputs, request: DerivedRequest): DerivedValuesData {
  const { internals, ...numbers } = deriveWithInternals(input, request);
  const { valleys, matchX } = internals;
  const data: DerivedValuesData = { ...numbers, temperaturePlot: null, alloyPlot: null };
  const t = request.temperatureK;
  const axis = (maxK: number | null) => temperatureAxis(t, maxK);
  const alloy = input.material.kind === "alloy" && input.endMembers !== null;

  if (!alloy) {
    if (input.material.kind === "alloy") return data;
    const series: NonNullable<DerivedValuesData["temperaturePlot"]>["series"] = [];
    let fittedRangeK: { minK: number; maxK: number } | null = null;
    for (const valley of VALLEY_KEYS) {
      const fit = fitParameters(input.values, valley);
      if (!fit) continue;
      if (valley === "G" && fit.range) fittedRangeK = { minK: fit.range.minK, maxK: fit.range.maxK };
      series.push({ label: VALLEY_LABELS[valley], points: axis(fit.range?.maxK ?? null).map((temperatureK) => ({ temperatureK, valueEv: varshniGap(fit.parameters, temperatureK).valueEv })) });
    }
    if (series.length) data.temperaturePlot = { series, fittedRangeK, markerK: t };
    return data;
  }
  if (!valleys.length) return data;
  const ends = input.endMembers!;
  const x = data.composition!;
  const ranges = [fitParameters(ends.a.values, "G")?.range, fitParameters(ends.b.values, "G")?.range].filter((r): r is NonNullable<typeof r> => r !== undefined);
  const fittedRangeK = ranges.length ? { minK: Math.max(...ranges.map((r) => r.minK)), maxK: Math.min(...ranges.map((r) => r.maxK)) } : null;
  data.temperaturePlot = {
    series: valleys.map(({ valley, model }) => ({
      label: VALLEY_LABELS[valley],
      points: axis(fittedRangeK?.maxK ?? null).map((temperatureK) => ({ temperatureK, valueEv: bowedGapEv(model.curveAt(temperatureK), x) })),
    })),
    fittedRangeK: fittedRangeK && fittedRangeK.maxK >= fittedRangeK.minK ? fittedRangeK : null,
    markerK: t,
  };
  const curves = new Map(valleys.map(({ valley, model }) => [valley, model.curveAt(t)]));
  const gamma = curves.get("G");
  const crossovers = (["X", "L"] as const).map((valley) => {
    const other = curves.get(valley);
    const at = gamma && other ? crossoverComposition(gamma, other) : null;
    return { valley, x: at, valueEv: at === null ? null : bowedGapEv(gamma!, at) };
  });
  const first = crossovers.filter((c) => c.x !== null).sort((a, b) => a.x! - b.x!)[0];
  const substrateKey = data.substrateKey;
  const substrate = substrateKey ? input.substrates.find((s) => s.material.key === substrateKey) : undefined;
  const substrateA = substrate ? latticeOf(substrate.values, substrate.material, t) : null;
  data.alloyPlot = {
    compositionLabel: `x in ${input.material.formula.replace("1-x", "1−x")} (fraction of ${ends.a.material.key})`,
    series: valleys.map(({ valley }) => ({ label: VALLEY_LABELS[valley], points: COMPOSITIONS.map((c) => ({ x: c, valueEv: bowedGapEv(curves.get(valley)!, c) })) })),
    crossovers: crossovers.filter((c) => curves.has("G") && curves.has(c.valley)),
    crossover: first ? { x: first.x!, valueEv: first.valueEv!, label: `Γ–${first.valley} crossover x = ${first.x!.toFixed(3)}` } : null,
    latticeMatch: substrateKey && substrateA
      ? {
          x: matchX,
          substrateKey,
          substrateAngstrom: dec(substrateA.p.value),
          label: matchX === null ? null : `on ${substrateKey}, x = ${matchX.toFixed(3)}`,
          note: matchX === null ? `No composition of ${input.material.key} matches ${substrateKey} (a = ${substrateA.p.value.toFixed(5)} Å).` : null,
        }
      : null,
  };
  return data;
}

import { findCheckValue, varshniFitOf, type CheckInput, type CheckMaterial, type CheckValue } from "~/domain/check-report";
import { toDecimalString } from "~/domain/decimal";
import { normalisedDecimalKey } from "~/domain/exact-decimal";
import {
  bowingCurveAtTemperature, bowedGapEv, CODATA_EDITION, crossoverComposition, latticeAtTemperature, latticeMatchedComposition, varshniGap,
  vegardLatticeAngstrom, type BowingCurve,
} from "~/domain/physics";
import { VALLEY_KEYS, VALLEY_LABELS, type Valley } from "~/domain/quantities";

// Derived values of a material at a chosen temperature (and composition, for alloys), each with its formula and
// the current revisions it came from. Pure: the loader in ./load.ts gathers the values.

export interface DerivedMaterial extends CheckMaterial {
  formula: string;
  compositionVariable: string | null;
}

export interface DerivedInputs {
  material: DerivedMaterial;
  values: readonly CheckValue[];
  endMembers: { a: { material: CheckMaterial; values: readonly CheckValue[] }; b: { material: CheckMaterial; values: readonly CheckValue[] } } | null;
  /** Candidate substrates for the lattice match (binaries and elements with their values). */
  substrates: readonly { material: CheckMaterial; values: readonly CheckValue[] }[];
}

export interface DerivedRequest {
  temperatureK: number;
  /** Alloys only; fraction of end member A. */
  composition: number | null;
  substrateKey: string | null;
}

export interface DerivedNumber {
  id: string;
  label: string;
  value: string;
  unit: string;
  formula: string;
  reference: string;
  inputs: CheckInput[];
  warnings: string[];
  /** A current value stated at exactly these conditions, shown beside the derived one. */
  stated: { value: string; recordId: number | null; revisionId: number | null } | null;
}

export interface DerivedSeries<P> {
  label: string;
  points: P[];
}

export interface DerivedValuesData {
  material: DerivedMaterial;
  temperatureK: number;
  composition: number | null;
  gaps: DerivedNumber[];
  lattice: DerivedNumber | null;
  /** What could not be derived, and why. */
  missing: string[];
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
  substrates: { key: string; name: string }[];
  substrateKey: string | null;
  codataEdition: string;
}

const dec = (x: number) => toDecimalString(x);
const num = (s: string) => Number(s);

type Owner = CheckMaterial | null;

function inputOf(v: CheckValue, symbol: string, owner: Owner): CheckInput {
  return { symbol, value: v.value!, unit: v.unit, recordId: v.recordId, revisionId: v.revisionId, from: "registry", material: owner?.key ?? null, sourceLabel: v.sourceLabel };
}

function varshniInputs(fit: NonNullable<ReturnType<typeof varshniFitOf>>, valley: Valley, owner: Owner): CheckInput[] {
  const v = VALLEY_LABELS[valley];
  return [inputOf(fit.eg0, `Eg(${v}, 0 K)`, owner), inputOf(fit.alpha, `α(${v})`, owner), inputOf(fit.beta, `β(${v})`, owner)];
}

function tLabel(t: number): string {
  return `${Number(t.toPrecision(8))} K`;
}

function stated(values: readonly CheckValue[], quantityKey: string, c: { valley?: Valley | null; temperatureK: number; composition: number | null }): DerivedNumber["stated"] {
  const found = findCheckValue(values, quantityKey, {
    valley: c.valley ?? null,
    temperatureK: String(c.temperatureK),
    composition: c.composition === null ? null : String(c.composition),
  });
  return found ? { value: found.value!, recordId: found.recordId, revisionId: found.revisionId } : null;
}

interface LatticeAt {
  valueAngstrom: number;
  inputs: CheckInput[];
  warnings: string[];
  usedSlope: boolean;
}

// a(T) = a(300 K) + (T − 300 K)·da/dT where da/dT is known; else a(300 K) itself, with a warning away from 300 K.
function latticeOf(values: readonly CheckValue[], owner: CheckMaterial, temperatureK: number, composition: string | null = null): LatticeAt | null {
  const a300 = findCheckValue(values, "lattice_a", { temperatureK: "300", composition });
  if (!a300) return null;
  const slope = findCheckValue(values, "lattice_dadt", { composition });
  const inputs = [inputOf(a300, "a(300 K)", owner)];
  if (!slope) {
    const warnings = temperatureK === 300 ? [] : [`no da/dT of ${owner.key} in the ledger: a(300 K) used at ${tLabel(temperatureK)}`];
    return { valueAngstrom: num(a300.value!), inputs, warnings, usedSlope: false };
  }
  inputs.push(inputOf(slope, "da/dT", owner));
  const range = slope.validFromK !== null || slope.validToK !== null
    ? { minK: slope.validFromK !== null ? num(slope.validFromK) : 0, maxK: slope.validToK !== null ? num(slope.validToK) : Infinity }
    : undefined;
  const result = latticeAtTemperature({ a300Angstrom: num(a300.value!), daDtAngstromPerK: num(slope.value!), fittedRangeK: range }, temperatureK);
  return { valueAngstrom: result.valueAngstrom, inputs, warnings: result.warning ? [`da/dT of ${owner.key}: ${result.warning}`] : [], usedSlope: true };
}

const VARSHNI_FORMULA = "Eg(T) = Eg(0) − αT²/(T + β)";
const BOWING_FORMULA = "Eg(x) = x·Eg_A(T) + (1 − x)·Eg_B(T) − x(1 − x)·(C0 + C1·x), Eg_A, Eg_B by Varshni at T";

interface AlloyValley {
  curveAt: (temperatureK: number) => BowingCurve & { warnings: string[] };
  inputs: CheckInput[];
  notes: string[];
}

function alloyValley(input: DerivedInputs, valley: Valley): AlloyValley | string {
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
  const inputs = [...varshniInputs(fitA, valley, ends.a.material), ...varshniInputs(fitB, valley, ends.b.material)];
  if (c0) inputs.push(inputOf(c0, `C0(${v})`, null));
  if (c1) inputs.push(inputOf(c1, `C1(${v})`, null));
  const notes = c0 ? [] : [`no bowing parameter at ${v} in the ledger: interpolated linearly (C = 0)`];
  const parameters = { a: fitA.parameters, b: fitB.parameters, c0Ev: c0 ? num(c0.value!) : 0, c1Ev: c1 ? num(c1.value!) : 0 };
  return { curveAt: (t) => bowingCurveAtTemperature(parameters, t), inputs, notes };
}

function temperatureAxis(temperatureK: number, fitMaxK: number | null): number[] {
  const top = Math.ceil(Math.max(500, temperatureK * 1.25, fitMaxK !== null && isFinite(fitMaxK) ? fitMaxK : 0) / 100) * 100;
  return Array.from({ length: 101 }, (_, i) => (top * i) / 100);
}

const COMPOSITIONS = Array.from({ length: 51 }, (_, i) => i / 50);

/** The first substrate of the list whose lattice match falls strictly inside the alloy, else end member B. */
function defaultSubstrate(input: DerivedInputs, match: (key: string) => number | null): string | null {
  for (const s of input.substrates) {
    const x = match(s.material.key);
    if (x !== null && x > 0 && x < 1) return s.material.key;
  }
  return input.endMembers?.b.material.key ?? input.substrates[0]?.material.key ?? null;
}

/** Derived gaps at Γ, X, L and the lattice constant at a temperature (and composition), with their plots. */
export function deriveMaterialValues(input: DerivedInputs, request: DerivedRequest): DerivedValuesData {
  const { material } = input;
  const t = request.temperatureK;
  const alloy = material.kind === "alloy" && input.endMembers !== null;
  const gaps: DerivedNumber[] = [];
  const missing: string[] = [];
  const substrates = input.substrates.map((s) => ({ key: s.material.key, name: s.material.name }));
  const data: DerivedValuesData = {
    material, temperatureK: t, composition: null, gaps, lattice: null, missing, temperaturePlot: null, alloyPlot: null, substrates, substrateKey: null,
    codataEdition: CODATA_EDITION,
  };
  const axis = (maxK: number | null) => temperatureAxis(t, maxK);

  if (!alloy) {
    if (material.kind === "alloy") missing.push(`${material.key} has no end members in the ledger: nothing can be derived for it.`);
    const series: NonNullable<DerivedValuesData["temperaturePlot"]>["series"] = [];
    let fittedRangeK: { minK: number; maxK: number } | null = null;
    for (const valley of VALLEY_KEYS) {
      const v = VALLEY_LABELS[valley];
      const fit = varshniFitOf(input.values, valley, null);
      if (!fit) {
        const eg0 = findCheckValue(input.values, "eg", { valley, temperatureK: null });
        if (eg0) missing.push(`Eg(${v}): only Eg(0) = ${eg0.value} eV is in the ledger; its α and β are missing.`);
        continue;
      }
      const result = varshniGap(fit.parameters, t);
      gaps.push({
        id: `eg-${valley}`, label: `Eg(${v}, ${tLabel(t)})`, value: dec(result.valueEv), unit: "eV", formula: VARSHNI_FORMULA, reference: "Varshni (1967)",
        inputs: varshniInputs(fit, valley, null), warnings: result.warning ? [result.warning] : [], stated: stated(input.values, "eg", { valley, temperatureK: t, composition: null }),
      });
      if (valley === "G" && fit.range) fittedRangeK = { minK: fit.range.minK, maxK: fit.range.maxK };
      const maxK = fit.range?.maxK ?? null;
      series.push({ label: v, points: axis(maxK).map((temperatureK) => ({ temperatureK, valueEv: varshniGap(fit.parameters, temperatureK).valueEv })) });
    }
    if (series.length) data.temperaturePlot = { series, fittedRangeK, markerK: t };
    const lattice = latticeOf(input.values, material, t);
    if (lattice) {
      data.lattice = {
        id: "lattice-a", label: `a(${tLabel(t)})`, value: dec(lattice.valueAngstrom), unit: "Å",
        formula: lattice.usedSlope ? "a(T) = a(300 K) + (T − 300 K)·da/dT" : "a(300 K) as stated", reference: lattice.usedSlope ? "linear thermal expansion" : "the ledger",
        inputs: lattice.inputs, warnings: lattice.warnings, stated: stated(input.values, "lattice_a", { temperatureK: t, composition: null }),
      };
    } else {
      missing.push(`a: no lattice constant of ${material.key} at 300 K in the ledger.`);
    }
    return data;
  }

  const ends = input.endMembers!;
  const valleys = VALLEY_KEYS.map((valley) => ({ valley, model: alloyValley(input, valley) }));
  for (const { model } of valleys) if (typeof model === "string") missing.push(model);
  const modelled = valleys.filter((v): v is { valley: Valley; model: AlloyValley } => typeof v.model !== "string");

  const substrateLattice = (key: string) => {
    const s = input.substrates.find((m) => m.material.key === key);
    return s ? latticeOf(s.values, s.material, t) : null;
  };
  const latticeA = latticeOf(ends.a.values, ends.a.material, t);
  const latticeB = latticeOf(ends.b.values, ends.b.material, t);
  const matchWith = (key: string) => {
    const s = substrateLattice(key);
    return s && latticeA && latticeB ? latticeMatchedComposition({ aAAngstrom: latticeA.valueAngstrom, aBAngstrom: latticeB.valueAngstrom }, s.valueAngstrom) : null;
  };
  const substrateKey = request.substrateKey && input.substrates.some((s) => s.material.key === request.substrateKey) ? request.substrateKey : defaultSubstrate(input, matchWith);
  data.substrateKey = substrateKey;
  const matchX = substrateKey ? matchWith(substrateKey) : null;
  const x = request.composition ?? (matchX !== null && matchX > 0 && matchX < 1 ? Number(matchX.toFixed(3)) : 0.3);
  data.composition = x;
  const xText = normalisedDecimalKey(String(x));

  for (const { valley, model } of modelled) {
    const v = VALLEY_LABELS[valley];
    const curve = model.curveAt(t);
    gaps.push({
      id: `eg-${valley}`, label: `Eg(${v}, x = ${xText}, ${tLabel(t)})`, value: dec(bowedGapEv(curve, x)), unit: "eV", formula: BOWING_FORMULA,
      reference: "Vurgaftman, Meyer & Ram-Mohan (2001); Varshni (1967)", inputs: model.inputs, warnings: [...model.notes, ...curve.warnings],
      stated: stated(input.values, "eg", { valley, temperatureK: t, composition: x }),
    });
  }
  if (modelled.length) {
    const gammaFits = [varshniFitOf(ends.a.values, "G", null), varshniFitOf(ends.b.values, "G", null)];
    const ranges = gammaFits.map((f) => f?.range).filter((r): r is NonNullable<typeof r> => r !== undefined);
    const fittedRangeK = ranges.length ? { minK: Math.max(...ranges.map((r) => r.minK)), maxK: Math.min(...ranges.map((r) => r.maxK)) } : null;
    data.temperaturePlot = {
      series: modelled.map(({ valley, model }) => ({
        label: VALLEY_LABELS[valley],
        points: axis(fittedRangeK?.maxK ?? null).map((temperatureK) => ({ temperatureK, valueEv: bowedGapEv(model.curveAt(temperatureK), x) })),
      })),
      fittedRangeK: fittedRangeK && fittedRangeK.maxK >= fittedRangeK.minK ? fittedRangeK : null,
      markerK: t,
    };
    const curves = new Map(modelled.map(({ valley, model }) => [valley, model.curveAt(t)]));
    const gamma = curves.get("G");
    const crossovers = (["X", "L"] as const).map((valley) => {
      const other = curves.get(valley);
      const at = gamma && other ? crossoverComposition(gamma, other) : null;
      return { valley, x: at, valueEv: at === null ? null : bowedGapEv(gamma!, at) };
    });
    const first = crossovers.filter((c) => c.x !== null).sort((a, b) => a.x! - b.x!)[0];
    const substrate = substrateKey ? substrateLattice(substrateKey) : null;
    data.alloyPlot = {
      compositionLabel: `x in ${material.formula.replace("1-x", "1−x")} (fraction of ${ends.a.material.key})`,
      series: modelled.map(({ valley }) => ({ label: VALLEY_LABELS[valley], points: COMPOSITIONS.map((c) => ({ x: c, valueEv: bowedGapEv(curves.get(valley)!, c) })) })),
      crossovers: crossovers.filter((c) => curves.has("G") && curves.has(c.valley)),
      crossover: first ? { x: first.x!, valueEv: first.valueEv!, label: `Γ–${first.valley} crossover x = ${first.x!.toFixed(3)}` } : null,
      latticeMatch: substrateKey && substrate
        ? {
            x: matchX,
            substrateKey,
            substrateAngstrom: dec(substrate.valueAngstrom),
            label: matchX === null ? null : `on ${substrateKey}, x = ${matchX.toFixed(3)}`,
            note: matchX === null ? `No composition of ${material.key} matches ${substrateKey} (a = ${substrate.valueAngstrom.toFixed(5)} Å).` : null,
          }
        : null,
    };
  }

  if (latticeA && latticeB) {
    data.lattice = {
      id: "lattice-a", label: `a(x = ${xText}, ${tLabel(t)})`, value: dec(vegardLatticeAngstrom({ aAAngstrom: latticeA.valueAngstrom, aBAngstrom: latticeB.valueAngstrom }, x)), unit: "Å",
      formula: "a(x) = x·a_A(T) + (1 − x)·a_B(T), a(T) = a(300 K) + (T − 300 K)·da/dT", reference: "Vegard (1921)",
      inputs: [...latticeA.inputs, ...latticeB.inputs], warnings: [...latticeA.warnings, ...latticeB.warnings],
      stated: stated(input.values, "lattice_a", { temperatureK: t, composition: x }),
    };
  } else {
    missing.push(`a: ${[!latticeA && ends.a.material.key, !latticeB && ends.b.material.key].filter(Boolean).join(" and ")} without a lattice constant at 300 K in the ledger.`);
  }
  return data;
}

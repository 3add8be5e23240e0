import { requireFinite, requireFraction, requirePositive } from "./validate";
import { type VarshniParameters, varshniGap } from "./varshni";

// Throughout, an alloy A(x)B(1−x) has x the fraction of A: x = 1 is pure A, x = 0 pure B.

export interface LatticePair {
  aAAngstrom: number;
  aBAngstrom: number;
}

export interface BowingCurve {
  egAEv: number;
  egBEv: number;
  /** Bowing C = c0 + c1·x, in eV. */
  c0Ev: number;
  c1Ev?: number;
}

export interface BowingTemperatureParameters {
  a: VarshniParameters;
  b: VarshniParameters;
  c0Ev: number;
  c1Ev?: number;
}

// Vegard (1921) [Vegard21]: a(x) = x·a(A) + (1 − x)·a(B).
export function vegardLatticeAngstrom(pair: LatticePair, x: number): number {
  requireFraction(x, "composition x");
  return x * requireFinite(pair.aAAngstrom, "a(A)") + (1 - x) * requireFinite(pair.aBAngstrom, "a(B)");
}

// Quadratic bowing [V01]: Eg(x) = x·Eg(A) + (1 − x)·Eg(B) − x(1 − x)·(C0 + C1·x).
export function bowedGapEv(curve: BowingCurve, x: number): number {
  requireFraction(x, "composition x");
  return bowingAt(curve, x);
}

function bowingAt({ egAEv, egBEv, c0Ev, c1Ev = 0 }: BowingCurve, x: number): number {
  return x * egAEv + (1 - x) * egBEv - x * (1 - x) * (c0Ev + c1Ev * x);
}

/** The bowing curve with both end points moved to temperature by Varshni first; C does not depend on T [V01]. */
export function bowingCurveAtTemperature(
  p: BowingTemperatureParameters,
  temperatureK: number,
): BowingCurve & { warnings: string[] } {
  const a = varshniGap(p.a, temperatureK);
  const b = varshniGap(p.b, temperatureK);
  const warnings = [a.warning && `end point A: ${a.warning}`, b.warning && `end point B: ${b.warning}`].filter(
    (w): w is string => w !== null,
  );
  return { egAEv: a.valueEv, egBEv: b.valueEv, c0Ev: requireFinite(p.c0Ev, "C0"), c1Ev: p.c1Ev ?? 0, warnings };
}

export function bowedGapAtTemperature(
  p: BowingTemperatureParameters,
  x: number,
  temperatureK: number,
): { valueEv: number; warnings: string[] } {
  const curve = bowingCurveAtTemperature(p, temperatureK);
  return { valueEv: bowedGapEv(curve, x), warnings: curve.warnings };
}

/** The composition whose Vegard lattice constant equals the substrate's, or null when it falls outside [0, 1]. */
export function latticeMatchedComposition(pair: LatticePair, substrateAngstrom: number): number | null {
  const aA = requireFinite(pair.aAAngstrom, "a(A)");
  const aB = requireFinite(pair.aBAngstrom, "a(B)");
  const target = requirePositive(substrateAngstrom, "substrate lattice constant");
  if (aA === aB) return null;
  const x = (target - aB) / (aA - aB);
  return x >= 0 && x <= 1 ? x : null;
}

const CROSSOVER_SAMPLES = 512;

/**
 * The smallest composition in [0, 1] where two bowed gaps are equal (e.g. Γ and X), or null where they do
 * not cross. The difference is a cubic; a sign change is sought on a fine grid, then bisected to rounding.
 * A crossing that only touches (a double root without sign change) is not reported.
 */
export function crossoverComposition(first: BowingCurve, second: BowingCurve): number | null {
  const difference = (x: number) => bowingAt(first, x) - bowingAt(second, x);
  let left = 0;
  let leftValue = difference(0);
  if (leftValue === 0) return 0;
  for (let i = 1; i <= CROSSOVER_SAMPLES; i++) {
    const right = i / CROSSOVER_SAMPLES;
    const rightValue = difference(right);
    if (rightValue === 0) return right;
    if (Math.sign(rightValue) !== Math.sign(leftValue)) return bisect(difference, left, right, leftValue);
    left = right;
    leftValue = rightValue;
  }
  return null;
}

function bisect(f: (x: number) => number, low: number, high: number, lowValue: number): number {
  let lo = low;
  let hi = high;
  let loValue = lowValue;
  while (hi - lo > Number.EPSILON) {
    const mid = (lo + hi) / 2;
    if (mid <= lo || mid >= hi) break;
    const value = f(mid);
    if (value === 0) return mid;
    if (Math.sign(value) === Math.sign(loValue)) {
      lo = mid;
      loValue = value;
    } else {
      hi = mid;
    }
  }
  return (lo + hi) / 2;
}

// Analytic partials of the quadratic bowing [V01]: ∂/∂Eg(A) = x, ∂/∂Eg(B) = 1 − x, ∂/∂C0 = −x(1 − x), ∂/∂C1 = −x²(1 − x).
export function bowedGapSensitivities(x: number): { egA: number; egB: number; c0: number; c1: number } {
  requireFraction(x, "composition x");
  return { egA: x, egB: 1 - x, c0: -x * (1 - x), c1: -x * x * (1 - x) };
}

// Vegard (1921): ∂a/∂a(A) = x, ∂a/∂a(B) = 1 − x.
export function vegardSensitivities(x: number): { aA: number; aB: number } {
  requireFraction(x, "composition x");
  return { aA: x, aB: 1 - x };
}

/** ∂x/∂ of each lattice constant for x = (a_s − a_B)/(a_A − a_B), the lattice-matched composition. */
export function latticeMatchedCompositionSensitivities(pair: LatticePair, substrateAngstrom: number): { aA: number; aB: number; substrate: number } {
  const aA = requireFinite(pair.aAAngstrom, "a(A)");
  const aB = requireFinite(pair.aBAngstrom, "a(B)");
  const s = requirePositive(substrateAngstrom, "substrate lattice constant");
  if (aA === aB) throw new RangeError("the end members have the same lattice constant: no composition is singled out");
  const d = aA - aB;
  return { aA: -(s - aB) / (d * d), aB: (s - aA) / (d * d), substrate: 1 / d };
}

// Lattice mismatch of a layer on a substrate, (a_layer − a_s)/a_s, with ∂/∂a_layer = 1/a_s and ∂/∂a_s = −a_layer/a_s².
export function latticeMismatch(layerAngstrom: number, substrateAngstrom: number): { value: number; sensitivities: { layer: number; substrate: number } } {
  const layer = requirePositive(layerAngstrom, "layer lattice constant");
  const s = requirePositive(substrateAngstrom, "substrate lattice constant");
  return { value: (layer - s) / s, sensitivities: { layer: 1 / s, substrate: -layer / (s * s) } };
}

import { requireFinite, requireNonNegative } from "./validate";

/** A temperature range (K) a parameter was fitted over; outside it the result is flagged. */
export interface FittedRangeK {
  minK: number;
  maxK: number;
}

export interface VarshniParameters {
  eg0Ev: number;
  /** α in eV/K; give this or alphaMevPerK. */
  alphaEvPerK?: number;
  /** α in meV/K, as most tables print it. */
  alphaMevPerK?: number;
  betaK: number;
  fittedRangeK?: FittedRangeK;
}

export interface TemperatureResult {
  outsideFittedRange: boolean;
  warning: string | null;
}

export interface LatticeTemperatureParameters {
  a300Angstrom: number;
  /** da/dT in Å/K. */
  daDtAngstromPerK: number;
  fittedRangeK?: FittedRangeK;
}

export function varshniAlphaEvPerK(parameters: Pick<VarshniParameters, "alphaEvPerK" | "alphaMevPerK">): number {
  const { alphaEvPerK, alphaMevPerK } = parameters;
  if ((alphaEvPerK === undefined) === (alphaMevPerK === undefined)) {
    throw new RangeError("give Varshni α once, in eV/K (alphaEvPerK) or in meV/K (alphaMevPerK)");
  }
  return alphaEvPerK !== undefined ? requireFinite(alphaEvPerK, "α") : requireFinite(alphaMevPerK!, "α") / 1000;
}

function rangeCheck(temperatureK: number, range: FittedRangeK | undefined): TemperatureResult {
  if (!range || (temperatureK >= range.minK && temperatureK <= range.maxK)) return { outsideFittedRange: false, warning: null };
  return {
    outsideFittedRange: true,
    warning: `${temperatureK} K lies outside the fitted range ${range.minK}–${range.maxK} K`,
  };
}

// Varshni (1967) [Var67]: Eg(T) = Eg(0) − αT²/(T + β).
export function varshniGap(parameters: VarshniParameters, temperatureK: number): TemperatureResult & { valueEv: number } {
  const eg0 = requireFinite(parameters.eg0Ev, "Eg(0)");
  const alpha = varshniAlphaEvPerK(parameters);
  const beta = requireFinite(parameters.betaK, "β");
  const t = requireNonNegative(temperatureK, "temperature");
  if (!(t + beta > 0)) throw new RangeError(`T + β must be positive (T = ${t} K, β = ${beta} K)`);
  return { valueEv: eg0 - (alpha * t * t) / (t + beta), ...rangeCheck(t, parameters.fittedRangeK) };
}

// Linear thermal expansion about 300 K: a(T) = a(300 K) + da/dT·(T − 300 K).
export function latticeAtTemperature(
  parameters: LatticeTemperatureParameters,
  temperatureK: number,
): TemperatureResult & { valueAngstrom: number } {
  const a300 = requireFinite(parameters.a300Angstrom, "a(300 K)");
  const slope = requireFinite(parameters.daDtAngstromPerK, "da/dT");
  const t = requireNonNegative(temperatureK, "temperature");
  return { valueAngstrom: a300 + slope * (t - 300), ...rangeCheck(t, parameters.fittedRangeK) };
}

/** ∂Eg(T)/∂ of each Varshni parameter, for the GUM law of propagation; α in meV/K as the ledger keeps it. */
export interface VarshniSensitivities {
  eg0: number;
  alphaMevPerK: number;
  betaK: number;
}

// Analytic partials of Varshni (1967): ∂Eg/∂Eg(0) = 1, ∂Eg/∂α = −T²/(T + β), ∂Eg/∂β = αT²/(T + β)².
export function varshniGapSensitivities(parameters: VarshniParameters, temperatureK: number): VarshniSensitivities {
  const alpha = varshniAlphaEvPerK(parameters);
  const beta = requireFinite(parameters.betaK, "β");
  const t = requireNonNegative(temperatureK, "temperature");
  if (!(t + beta > 0)) throw new RangeError(`T + β must be positive (T = ${t} K, β = ${beta} K)`);
  return { eg0: 1, alphaMevPerK: -(t * t) / (t + beta) / 1000, betaK: (alpha * t * t) / ((t + beta) * (t + beta)) };
}

// ∂a(T)/∂a(300 K) = 1, ∂a(T)/∂(da/dT) = T − 300 K.
export function latticeAtTemperatureSensitivities(temperatureK: number): { a300: number; daDt: number } {
  const t = requireNonNegative(temperatureK, "temperature");
  return { a300: 1, daDt: t - 300 };
}

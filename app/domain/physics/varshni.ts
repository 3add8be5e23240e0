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

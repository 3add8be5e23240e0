import { HBAR2_OVER_2ME_EV_A2 } from "./constants";
import { symmetricEigenvalues } from "./symmetric-eigenvalues";
import { PhysicsInputError, requireFinite, requirePositive, requirePositiveInteger } from "./validate";
import { type Verdict, verdictFromResidual } from "./verdict";

// Nearly-free-electron check in one dimension: the central equation of Bloch theory [Kittel ch. 7], [AM ch. 9].
// Convention: U(x) = Σ_n U_n e^{i n G x}, G = 2π/a, U_{−n} = U_n real, so U(x) = U_0 + 2 Σ_{n≥1} U_n cos(nGx);
// energies are measured from U_0 = 0. A potential written U0·cos(Gx) therefore has U_1 = U0/2.

export interface FourierCoefficient {
  /** n ≥ 1 in U_n. */
  n: number;
  energyEv: number;
}

export interface PeriodicPotential {
  /** Period a in Å (convert other units first, e.g. with convertToCanonical in ~/domain/units). */
  periodAngstrom: number;
  coefficients: readonly FourierCoefficient[];
  /** Band mass in units of the free-electron mass m0; default 1. */
  massM0?: number;
}

/** The plane waves e^{i(k − mG)x} for m = min..max. */
export interface PlaneWaveOrders {
  min: number;
  max: number;
}

export interface ConvergenceOptions {
  /**
   * The basis grows until the result changes by less than this (eV) over two steps running; default 1e-9. Where the
   * energy scale makes RELATIVE_CONVERGENCE of it larger, that is the threshold instead.
   */
  convergenceEv?: number;
  /**
   * Largest basis tried before giving up as not converged; default 201, or as many as the first basis and two steps
   * of the highest coefficient order need where that is more (orders above about 30).
   */
  maxPlaneWaves?: number;
}

export interface BandGapEdges {
  gapEv: number;
  lowerEv: number;
  upperEv: number;
}

export interface CentralEquationGap extends BandGapEdges {
  planeWaves: number;
  converged: boolean;
  /** The threshold the basis was grown against (eV): the absolute one, or the relative one where larger. */
  thresholdEv: number;
}

export interface NfeBands {
  /** k in units of π/a, as given. */
  kPiOverA: number[];
  /** bandsEv[b][i]: band b (0 = lowest) at kPiOverA[i]. */
  bandsEv: number[][];
  /** The free-electron parabolas ε(k − mG) folded into the same zone, lowest first, same shape as bandsEv. */
  freeElectronEv: number[][];
  planeWaves: number;
  converged: boolean;
}

export interface NfeCheckInput extends PeriodicPotential, ConvergenceOptions {
  /** Gap between bands n and n + 1 (at k = π/a for odd n, k = 0 for even n); default 1. */
  gapIndex?: number;
  statedGapEv?: number | null;
  /** Default 0.01 eV. */
  toleranceEv?: number;
}

export interface NfeCheck {
  gapIndex: number;
  /** Where the gap sits, in units of π/a: 1 (zone boundary) or 0 (zone centre). */
  kPiOverA: 0 | 1;
  firstOrder: BandGapEdges;
  centralEquation: CentralEquationGap;
  statedGapEv: number | null;
  toleranceEv: number;
  /** stated − central-equation gap, or null without a stated gap. */
  residualEv: number | null;
  verdict: Verdict;
  notes: string[];
}

export const DEFAULT_CONVERGENCE_EV = 1e-9;
export const DEFAULT_MAX_PLANE_WAVES = 201;
export const DEFAULT_NFE_TOLERANCE_EV = 0.01;
/**
 * The relative convergence threshold, a fraction of the energy scale of the gap. Rounding moves the eigenvalues by
 * about ε·N²·ħ²G²/2m for a basis of 2N + 1 plane waves (ε = 2.2e-16), at most 2.2e-12 of it at the 201-wave cap.
 */
export const RELATIVE_CONVERGENCE = 1e-12;
/** The coarsest resolution a gap is reported with (eV): inputs whose energy scale allows no better are refused. */
export const MAX_RESOLUTION_EV = 1e-6;
/** How many successive basis steps must each move the result by less than the threshold. */
const QUIET_STEPS = 2;

interface Model {
  /** G = 2π/a in 1/Å. */
  g: number;
  /** ħ²/2m in eV·Å². */
  kinetic: number;
  /** u[n] = U_n for n = 0..M, u[0] = 0. */
  u: Float64Array;
}

function modelOf(potential: PeriodicPotential): Model {
  const periodAngstrom = requirePositive(potential.periodAngstrom, "period");
  const massM0 = requirePositive(potential.massM0 ?? 1, "mass");
  let maxOrder = 0;
  for (const { n, energyEv } of potential.coefficients) {
    requirePositiveInteger(n, "coefficient order n");
    requireFinite(energyEv, `coefficient U_${n}`);
    maxOrder = Math.max(maxOrder, n);
  }
  const u = new Float64Array(maxOrder + 1);
  const seen = new Set<number>();
  for (const { n, energyEv } of potential.coefficients) {
    if (seen.has(n)) throw new RangeError(`coefficient U_${n} is given twice`);
    seen.add(n);
    u[n] = energyEv;
  }
  return { g: (2 * Math.PI) / periodAngstrom, kinetic: HBAR2_OVER_2ME_EV_A2 / massM0, u };
}

/** ε(k) = ħ²k²/2m in eV, k in 1/Å. */
export function freeElectronEnergyEv(kPerAngstrom: number, massM0 = 1): number {
  return (HBAR2_OVER_2ME_EV_A2 / requirePositive(massM0, "mass")) * kPerAngstrom * kPerAngstrom;
}

/** ε(π/a) = (ħ²/2m)(π/a)², the free-electron energy at the first zone boundary, in eV. */
export function zoneBoundaryEnergyEv(periodAngstrom: number, massM0 = 1): number {
  return freeElectronEnergyEv(Math.PI / requirePositive(periodAngstrom, "period"), massM0);
}

/** Gap n sits at the zone boundary for odd n and at the zone centre for even n (k in units of π/a). */
export function gapWavevectorPiOverA(gapIndex: number): 0 | 1 {
  return requirePositiveInteger(gapIndex, "gap index") % 2 === 1 ? 1 : 0;
}

function ordersOf(orders: number | PlaneWaveOrders): PlaneWaveOrders {
  if (typeof orders !== "number") {
    if (!(Number.isInteger(orders.min) && Number.isInteger(orders.max) && orders.max >= orders.min)) {
      throw new RangeError(`plane-wave orders must be integers with min ≤ max (got ${orders.min}..${orders.max})`);
    }
    return orders;
  }
  if (!(Number.isInteger(orders) && orders >= 0)) throw new RangeError(`basis half-width must be a whole number (got ${orders})`);
  return { min: -orders, max: orders };
}

// H_mm' = (ħ²/2m)(k − mG)² δ_mm' + U_(m'−m), U_0 = 0, for m = min..max; row-major, size (max − min + 1)².
function hamiltonianOf(model: Model, kPerAngstrom: number, { min, max }: PlaneWaveOrders): Float64Array {
  const size = max - min + 1;
  const h = new Float64Array(size * size);
  const { g, kinetic, u } = model;
  const reach = Math.min(u.length - 1, size - 1);
  for (let i = 0; i < size; i++) {
    const q = kPerAngstrom - (min + i) * g;
    h[i * size + i] = kinetic * q * q;
    for (let d = 1; d <= reach && i + d < size; d++) {
      h[i * size + i + d] = u[d];
      h[(i + d) * size + i] = u[d];
    }
  }
  return h;
}

function eigenvaluesOf(model: Model, kPerAngstrom: number, orders: PlaneWaveOrders): Float64Array {
  return symmetricEigenvalues(hamiltonianOf(model, kPerAngstrom, orders), orders.max - orders.min + 1);
}

/**
 * The plane-wave Hamiltonian of the central equation at k (units of π/a); `orders` is a half-width N
 * (m = −N..N, 2N + 1 plane waves) or an explicit range.
 */
export function planeWaveHamiltonian(
  potential: PeriodicPotential,
  kPiOverA: number,
  orders: number | PlaneWaveOrders,
): number[][] {
  const model = modelOf(potential);
  const range = ordersOf(orders);
  const size = range.max - range.min + 1;
  const h = hamiltonianOf(model, kToPerAngstrom(model, kPiOverA), range);
  return Array.from({ length: size }, (_, i) => Array.from(h.subarray(i * size, (i + 1) * size)));
}

/** Eigenvalues (eV, ascending) of the plane-wave Hamiltonian at k (units of π/a). */
export function centralEquationEigenvaluesEv(
  potential: PeriodicPotential,
  kPiOverA: number,
  orders: number | PlaneWaveOrders,
): number[] {
  const model = modelOf(potential);
  return Array.from(eigenvaluesOf(model, kToPerAngstrom(model, kPiOverA), ordersOf(orders)));
}

function kToPerAngstrom(model: Model, kPiOverA: number): number {
  return (requireFinite(kPiOverA, "k") * model.g) / 2;
}

/** First order [Kittel ch. 7]: E± = ε(nG/2) ± |U_n|, gap 2|U_n|. */
export function firstOrderGap(potential: PeriodicPotential, gapIndex = 1): BandGapEdges {
  const model = modelOf(potential);
  requirePositiveInteger(gapIndex, "gap index");
  const coupling = Math.abs(model.u[gapIndex] ?? 0);
  const q = (gapIndex * model.g) / 2;
  const centre = model.kinetic * q * q;
  return { gapEv: 2 * coupling, lowerEv: centre - coupling, upperEv: centre + coupling };
}

interface Converged {
  values: number[];
  halfWidth: number;
  converged: boolean;
}

interface Growth {
  /** The smallest usable half-width N. */
  needed: number;
  start: number;
  /** Plane waves added on each side per step: the highest coefficient order, so that every harmonic reaches the new ones. */
  step: number;
  thresholdEv: number;
}

// Grows the basis by `step` plane waves on each side (m = −N..N, N → N + step) until every value `evaluate` returns
// moves by less than the threshold on QUIET_STEPS steps running. U_n couples only plane waves whose orders differ by
// n: growing by one when every n shares a factor d ≥ 2 adds plane waves the gap's states never meet, a step that
// changes nothing and would stop the loop early. A step of the highest order M adds M successive orders a side,
// each coupled to the basis already there.
function converge(evaluate: (halfWidth: number) => number[], growth: Growth, options: ConvergenceOptions): Converged {
  const { needed, step, thresholdEv } = growth;
  const roomForTwoSteps = 2 * (growth.start + QUIET_STEPS * step) + 1;
  const maxPlaneWaves = requirePositiveInteger(options.maxPlaneWaves ?? Math.max(DEFAULT_MAX_PLANE_WAVES, roomForTwoSteps), "plane-wave cap");
  const maxHalfWidth = Math.floor((maxPlaneWaves - 1) / 2);
  if (maxHalfWidth < needed) {
    throw new RangeError(`plane-wave cap ${maxPlaneWaves} is below the ${2 * needed + 1} plane waves needed`);
  }
  let halfWidth = Math.max(needed, Math.min(growth.start, maxHalfWidth - QUIET_STEPS * step));
  let previous = evaluate(halfWidth);
  let quiet = 0;
  while (halfWidth < maxHalfWidth) {
    halfWidth = Math.min(halfWidth + step, maxHalfWidth);
    const current = evaluate(halfWidth);
    const change = Math.max(...current.map((value, i) => Math.abs(value - previous[i])));
    previous = current;
    quiet = change < thresholdEv ? quiet + 1 : 0;
    if (quiet >= QUIET_STEPS) return { values: current, halfWidth, converged: true };
  }
  return { values: previous, halfWidth, converged: false };
}

/** ħ²G²/2m, or the free-electron energy ε(nG/2) of gap n where that is larger, in eV: the energies gap n is made of. */
function energyScaleOf(model: Model, gapIndex: number): number {
  return model.kinetic * model.g * model.g * Math.max(1, (gapIndex * gapIndex) / 4);
}

/** The energy scale of gap n (ħ²G²/2m, or ε(nG/2) where larger), in eV. */
export function nfeEnergyScaleEv(potential: Pick<PeriodicPotential, "periodAngstrom" | "massM0">, gapIndex = 1): number {
  return energyScaleOf(modelOf({ ...potential, coefficients: [] }), requirePositiveInteger(gapIndex, "gap index"));
}

const short = (x: number) => String(Number(x.toPrecision(3)));

/** The smallest period (Å) whose energy scale double precision resolves gap n at, for a band mass m (m0). */
export function smallestResolvablePeriodAngstrom(massM0 = 1, gapIndex = 1): number {
  const stretch = Math.max(1, (requirePositiveInteger(gapIndex, "gap index") ** 2) / 4);
  return 2 * Math.PI * Math.sqrt(((HBAR2_OVER_2ME_EV_A2 / requirePositive(massM0, "mass")) * stretch * RELATIVE_CONVERGENCE) / MAX_RESOLUTION_EV);
}

// Double precision carries about 16 digits: energies of the order of the scale are resolved only to a fixed fraction
// of it. Where that fraction exceeds MAX_RESOLUTION_EV the gap would be a number without meaning (a period of
// 1e-30 Å gives a gap of 0), so the input is refused at the period, or at the mass where the period is ordinary.
function growthOf(model: Model, potential: PeriodicPotential, gapIndex: number, highestBand: number, options: ConvergenceOptions): Growth {
  const absolute = requirePositive(options.convergenceEv ?? DEFAULT_CONVERGENCE_EV, "convergence threshold");
  const scale = energyScaleOf(model, gapIndex);
  const resolution = RELATIVE_CONVERGENCE * scale;
  if (resolution > MAX_RESOLUTION_EV) {
    const largestScale = MAX_RESOLUTION_EV / RELATIVE_CONVERGENCE;
    const massM0 = potential.massM0 ?? 1;
    const periodAngstrom = potential.periodAngstrom;
    const stretch = Math.max(1, (gapIndex * gapIndex) / 4);
    const atFreeMass = HBAR2_OVER_2ME_EV_A2 * ((2 * Math.PI) / periodAngstrom) ** 2 * stretch > largestScale;
    const why =
      `gap ${gapIndex} lies at an energy scale of ${short(scale)} eV, where double precision resolves it only to ` +
      `${short(resolution)} eV (the limit is ${MAX_RESOLUTION_EV * 1e6} µeV)`;
    if (atFreeMass) {
      const smallest = smallestResolvablePeriodAngstrom(massM0, gapIndex);
      throw new PhysicsInputError(
        "period",
        `the period ${short(periodAngstrom)} Å is too small: ${why}; at m = ${short(massM0)} m0 the period must be at least ${short(smallest)} Å`,
      );
    }
    const lightest = (HBAR2_OVER_2ME_EV_A2 * ((2 * Math.PI) / periodAngstrom) ** 2 * stretch) / largestScale;
    throw new PhysicsInputError(
      "mass",
      `the mass ${short(massM0)} m0 is too small: ${why}; at a = ${short(periodAngstrom)} Å the mass must be at least ${short(lightest)} m0`,
    );
  }
  const step = Math.max(model.u.length - 1, 1);
  return {
    needed: Math.ceil((highestBand - 1) / 2),
    // A first basis that already holds the degenerate pair of the gap and the states its coefficients couple to.
    start: Math.ceil(highestBand / 2) + step + 2,
    step,
    thresholdEv: Math.max(absolute, resolution),
  };
}

function bandEnergiesAt(model: Model, kPiOverA: number, halfWidth: number): Float64Array {
  return eigenvaluesOf(model, kToPerAngstrom(model, kPiOverA), { min: -halfWidth, max: halfWidth });
}

/**
 * The gap n from diagonalising the plane-wave Hamiltonian at its k, the basis grown until the gap and both edges
 * change by less than the convergence threshold on two steps running. Throws a PhysicsInputError for a period or a
 * mass whose energy scale double precision cannot resolve the gap at.
 */
export function centralEquationGap(
  potential: PeriodicPotential,
  gapIndex = 1,
  options: ConvergenceOptions = {},
): CentralEquationGap {
  const model = modelOf(potential);
  const k = gapWavevectorPiOverA(gapIndex);
  const edges = (halfWidth: number) => {
    const values = bandEnergiesAt(model, k, halfWidth);
    return [values[gapIndex - 1], values[gapIndex], values[gapIndex] - values[gapIndex - 1]];
  };
  const growth = growthOf(model, potential, gapIndex, gapIndex + 1, options);
  const result = converge(edges, growth, options);
  const [lowerEv, upperEv, gapEv] = result.values;
  return {
    gapEv,
    lowerEv,
    upperEv,
    planeWaves: 2 * result.halfWidth + 1,
    converged: result.converged,
    thresholdEv: growth.thresholdEv,
  };
}

/** k from −π/a to π/a in units of π/a, evenly spaced (201 points by default). */
export function zoneKPoints(count = 201): number[] {
  requirePositiveInteger(count, "k-point count");
  if (count === 1) return [0];
  return Array.from({ length: count }, (_, i) => -1 + (2 * i) / (count - 1));
}

/**
 * E(k) of the lowest bands in the reduced zone at the given k (units of π/a), with one basis for every k,
 * converged for those bands at k = 0 and k = π/a; the free-electron parabolas folded likewise.
 */
export function nfeBands(
  potential: PeriodicPotential,
  kPiOverA: readonly number[] = zoneKPoints(),
  options: ConvergenceOptions & { bandCount?: number } = {},
): NfeBands {
  const model = modelOf(potential);
  const bandCount = requirePositiveInteger(options.bandCount ?? 4, "band count");
  const indices = Array.from({ length: bandCount }, (_, i) => i);
  const lowest = (halfWidth: number) =>
    [0, 1].flatMap((k) => Array.from(bandEnergiesAt(model, k, halfWidth).subarray(0, bandCount)));
  const growth = growthOf(model, potential, Math.max(bandCount - 1, 1), bandCount, options);
  const { halfWidth, converged } = converge(lowest, growth, options);
  const orders = { min: -halfWidth, max: halfWidth };
  const bandsEv = indices.map(() => new Array<number>(kPiOverA.length));
  const freeElectronEv = indices.map(() => new Array<number>(kPiOverA.length));
  kPiOverA.forEach((kReduced, column) => {
    const k = kToPerAngstrom(model, kReduced);
    const bands = eigenvaluesOf(model, k, orders);
    const free: number[] = [];
    for (let m = orders.min; m <= orders.max; m++) free.push(model.kinetic * (k - m * model.g) ** 2);
    free.sort((x, y) => x - y);
    for (const b of indices) {
      bandsEv[b][column] = bands[b];
      freeElectronEv[b][column] = free[b];
    }
  });
  return { kPiOverA: [...kPiOverA], bandsEv, freeElectronEv, planeWaves: 2 * halfWidth + 1, converged };
}

export interface NfeVerdictInput {
  statedGapEv: number | null | undefined;
  centralGapEv: number;
  firstOrderGapEv: number;
  toleranceEv: number;
  converged: boolean;
}

// The verdict rests on the central-equation gap alone (see docs/decisions/001-nfe-check-verdict.md):
// pass when |stated − central| ≤ tol, warn up to 3·tol, fail beyond; a pass on an unconverged basis is a warn.
export function nfeVerdict(input: NfeVerdictInput): { verdict: Verdict; residualEv: number | null; notes: string[] } {
  const { statedGapEv, centralGapEv, firstOrderGapEv, converged } = input;
  const toleranceEv = requirePositive(input.toleranceEv, "tolerance");
  const notes: string[] = [];
  if (!converged) {
    notes.push("the central equation did not converge within the plane-wave cap: its gap is the last basis's, not a converged value, so it cannot pass");
  }
  if (Math.abs(firstOrderGapEv - centralGapEv) > toleranceEv) {
    notes.push("first-order 2|U_n| differs from the central-equation gap by more than the tolerance: the potential is not weak");
  }
  if (statedGapEv === null || statedGapEv === undefined) return { verdict: "none", residualEv: null, notes };
  const residualEv = requireFinite(statedGapEv, "stated gap") - centralGapEv;
  let verdict: Verdict = verdictFromResidual(residualEv, toleranceEv);
  if (verdict === "pass" && !converged) verdict = "warn";
  if (verdict !== "pass" && Math.abs(statedGapEv - firstOrderGapEv) <= toleranceEv) {
    notes.push("the stated gap matches the first-order estimate 2|U_n|, not the central equation");
  }
  if (verdict === "fail" && Math.abs(statedGapEv - centralGapEv / 2) <= toleranceEv) {
    notes.push("the stated gap is half the computed one: was the amplitude U0 of U0·cos(nGx) entered as U_n (U_n = U0/2)?");
  }
  return { verdict, residualEv, notes };
}

/** The nearly-free-electron check of a gap record: first order, central equation, verdict against the stated gap. */
export function checkNfeGap(input: NfeCheckInput): NfeCheck {
  const gapIndex = requirePositiveInteger(input.gapIndex ?? 1, "gap index");
  const toleranceEv = requirePositive(input.toleranceEv ?? DEFAULT_NFE_TOLERANCE_EV, "tolerance");
  const statedGapEv = input.statedGapEv ?? null;
  const firstOrder = firstOrderGap(input, gapIndex);
  const centralEquation = centralEquationGap(input, gapIndex, input);
  const { verdict, residualEv, notes } = nfeVerdict({
    statedGapEv,
    centralGapEv: centralEquation.gapEv,
    firstOrderGapEv: firstOrder.gapEv,
    toleranceEv,
    converged: centralEquation.converged,
  });
  return {
    gapIndex,
    kPiOverA: gapWavevectorPiOverA(gapIndex),
    firstOrder,
    centralEquation,
    statedGapEv,
    toleranceEv,
    residualEv,
    verdict,
    notes,
  };
}

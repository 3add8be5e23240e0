import { HBAR2_OVER_2ME_EV_A2, RYDBERG_EV } from "./constants";
import { hermitianEigenvalues, symmetricEigenvalues } from "./symmetric-eigenvalues";
import { requireFinite, requirePositive, requirePositiveInteger } from "./validate";
import { type Verdict, verdictFromResidual } from "./verdict";

// The empirical pseudopotential method for diamond and zinc-blende crystals: the central equation in three
// dimensions with a local potential given by a few form factors [CB66] (Cohen & Bergstresser, Phys. Rev. 141,
// 789 (1966)). Plane waves e^{i(k+G)·r} on the fcc reciprocal lattice, G = (2π/a)(h, k, l) with h, k, l all odd
// or all even; two atoms at ±τ, τ = (a/8)(1, 1, 1), so that
//   V(G) = V_S(|G|²) cos(G·τ) + i V_A(|G|²) sin(G·τ),   H_GG' = (ħ²/2m0)|k + G|² δ_GG' + V(G − G'),
// with |G|² in units of (2π/a)². V_S(4) and V_A(8) drop out (cos(G·τ) = 0 on |G|² = 4, sin(G·τ) = 0 on
// |G|² = 8), and form factors beyond |G|² = 11 are taken as zero. Energies are measured from V(0) = 0.

export type CrystalStructure = "diamond" | "zincblende";
export const CRYSTAL_STRUCTURES: readonly CrystalStructure[] = ["diamond", "zincblende"];

/** S = symmetric, A = antisymmetric; the number is |G|² in units of (2π/a)². */
export const FORM_FACTOR_KEYS = ["S3", "S8", "S11", "A3", "A4", "A11"] as const;
export type FormFactorKey = (typeof FORM_FACTOR_KEYS)[number];
export type FormFactors = Partial<Record<FormFactorKey, number>>;
export const SYMMETRIC_FORM_FACTOR_KEYS: readonly FormFactorKey[] = ["S3", "S8", "S11"];
export const ANTISYMMETRIC_FORM_FACTOR_KEYS: readonly FormFactorKey[] = ["A3", "A4", "A11"];

export interface PseudopotentialCrystal {
  structure: CrystalStructure;
  /** Cubic lattice constant a in Å. */
  latticeAngstrom: number;
  /** Form factors in eV (see formFactorsFromRydberg); a missing one is zero. */
  formFactorsEv: FormFactors;
}

/** A point of the Brillouin zone in units of 2π/a. */
export type Wavevector = readonly [number, number, number];

/** The high-symmetry points of the fcc Brillouin zone, in units of 2π/a. */
export const SYMMETRY_POINTS = {
  Γ: [0, 0, 0],
  X: [1, 0, 0],
  L: [0.5, 0.5, 0.5],
  U: [1, 0.25, 0.25],
  K: [0.75, 0.75, 0],
} as const satisfies Record<string, Wavevector>;

/** Bands are numbered from 1; the four lowest are filled (eight valence electrons per primitive cell). */
export const VALENCE_BANDS = 4;
export const DEFAULT_EPM_CONVERGENCE_EV = 1e-3;
export const DEFAULT_EPM_MAX_PLANE_WAVES = 283;
/** A three-form-factor local model is fitted to a few transitions; see the check page's note. */
export const DEFAULT_EPM_TOLERANCE_EV = 0.15;
/** The first basis tried: every G with |G|² ≤ 11, the reach of the form factors (51 plane waves). */
export const FIRST_BASIS_SQUARE = 11;

export function rydbergToEv(energyRy: number): number {
  return energyRy * RYDBERG_EV;
}

export function evToRydberg(energyEv: number): number {
  return energyEv / RYDBERG_EV;
}

/** The same form factors converted from Ry to eV (1 Ry = R∞hc, CODATA 2018). */
export function formFactorsFromRydberg(formFactorsRy: FormFactors): FormFactors {
  const out: FormFactors = {};
  for (const key of FORM_FACTOR_KEYS) {
    const value = formFactorsRy[key];
    if (value !== undefined) out[key] = rydbergToEv(value);
  }
  return out;
}

/** ħ²/2m0 · (2π/a)²: the kinetic energy of |k + G|² = 1 in units of (2π/a)², in eV. */
export function kineticUnitEv(latticeAngstrom: number): number {
  const g = (2 * Math.PI) / requirePositive(latticeAngstrom, "lattice constant");
  return HBAR2_OVER_2ME_EV_A2 * g * g;
}

interface Model {
  crystal: PseudopotentialCrystal;
  kineticEv: number;
  symmetric: Map<number, number>;
  antisymmetric: Map<number, number>;
  /** No antisymmetric form factor: H is real symmetric. */
  real: boolean;
}

function modelOf(crystal: PseudopotentialCrystal): Model {
  if (!CRYSTAL_STRUCTURES.includes(crystal.structure)) {
    throw new RangeError(`structure must be diamond or zincblende (got ${String(crystal.structure)})`);
  }
  const kineticEv = kineticUnitEv(crystal.latticeAngstrom);
  const symmetric = new Map<number, number>();
  const antisymmetric = new Map<number, number>();
  for (const [key, value] of Object.entries(crystal.formFactorsEv)) {
    if (value === undefined) continue;
    if (!(FORM_FACTOR_KEYS as readonly string[]).includes(key)) {
      throw new RangeError(`unknown form factor ${key} (known: ${FORM_FACTOR_KEYS.join(", ")})`);
    }
    requireFinite(value, `form factor ${key}`);
    const square = Number(key.slice(1));
    if (key.startsWith("A")) {
      if (crystal.structure === "diamond" && value !== 0) {
        throw new RangeError(`antisymmetric form factor ${key} needs the zinc-blende structure (two different atoms)`);
      }
      antisymmetric.set(square, value);
    } else {
      symmetric.set(square, value);
    }
  }
  const real = [...antisymmetric.values()].every((value) => value === 0);
  return { crystal, kineticEv, symmetric, antisymmetric, real };
}

/** The distinct |G|² of the fcc reciprocal lattice up to maxSquare, in units of (2π/a)²: 0, 3, 4, 8, 11, 12, 16, … */
export function fccShells(maxSquare: number): number[] {
  const squares = new Set<number>();
  for (const [h, k, l] of fccReciprocalVectors(maxSquare)) squares.add(h * h + k * k + l * l);
  return [...squares].sort((a, b) => a - b);
}

/**
 * The fcc reciprocal-lattice vectors (h, k, l all odd or all even, in units of 2π/a) with h² + k² + l² ≤ maxSquare,
 * ordered by |G|² and then by (h, k, l).
 */
export function fccReciprocalVectors(maxSquare: number): [number, number, number][] {
  if (!(Number.isFinite(maxSquare) && maxSquare >= 0)) throw new RangeError(`|G|² cut-off must be zero or positive (got ${maxSquare})`);
  const reach = Math.floor(Math.sqrt(maxSquare));
  const out: [number, number, number][] = [];
  const low = reach === 0 ? 0 : -reach;
  for (let h = low; h <= reach; h++) {
    for (let k = low; k <= reach; k++) {
      for (let l = low; l <= reach; l++) {
        const parity = Math.abs(h) % 2;
        if (Math.abs(k) % 2 !== parity || Math.abs(l) % 2 !== parity) continue;
        if (h * h + k * k + l * l <= maxSquare) out.push([h, k, l]);
      }
    }
  }
  return out.sort((a, b) => a[0] ** 2 + a[1] ** 2 + a[2] ** 2 - (b[0] ** 2 + b[1] ** 2 + b[2] ** 2) || a[0] - b[0] || a[1] - b[1] || a[2] - b[2]);
}

/** V(G) = V_S cos(G·τ) + i V_A sin(G·τ) in eV, G·τ = π(h + k + l)/4 [CB66]. */
export function formFactorPotentialEv(crystal: PseudopotentialCrystal, g: Wavevector): { re: number; im: number } {
  return potentialOf(modelOf(crystal), g[0], g[1], g[2]);
}

function potentialOf(model: Model, h: number, k: number, l: number): { re: number; im: number } {
  const square = h * h + k * k + l * l;
  const vs = model.symmetric.get(square) ?? 0;
  const va = model.antisymmetric.get(square) ?? 0;
  // cos and sin of multiples of π/4, exactly zero where they vanish.
  const c = cosQuarterPi(h + k + l);
  const s = cosQuarterPi(h + k + l - 2);
  return { re: vs === 0 ? 0 : vs * c, im: va === 0 ? 0 : va * s };
}

// cos(nπ/4) for an integer n, with exact zeros; sin(nπ/4) = cos((n − 2)π/4).
function cosQuarterPi(n: number): number {
  const m = ((n % 8) + 8) % 8;
  return [1, Math.SQRT1_2, 0, -Math.SQRT1_2, -1, -Math.SQRT1_2, 0, Math.SQRT1_2][m];
}

/** A plane-wave basis: every G with |G|² ≤ maxSquare, and the potential part of H on it (independent of k). */
export interface PlaneWaveBasis {
  maxSquare: number;
  vectors: [number, number, number][];
  size: number;
  /** V(G_i − G_j), row-major, real and imaginary parts. */
  potentialRe: Float64Array;
  potentialIm: Float64Array;
  real: boolean;
  kineticEv: number;
}

export function planeWaveBasis(crystal: PseudopotentialCrystal, maxSquare: number): PlaneWaveBasis {
  return basisOf(modelOf(crystal), maxSquare);
}

function basisOf(model: Model, maxSquare: number): PlaneWaveBasis {
  const vectors = fccReciprocalVectors(maxSquare);
  const size = vectors.length;
  const potentialRe = new Float64Array(size * size);
  const potentialIm = new Float64Array(size * size);
  for (let i = 0; i < size; i++) {
    const [hi, ki, li] = vectors[i];
    for (let j = 0; j < size; j++) {
      if (i === j) continue;
      const [hj, kj, lj] = vectors[j];
      const dh = hi - hj;
      const dk = ki - kj;
      const dl = li - lj;
      if (dh * dh + dk * dk + dl * dl > 11) continue;
      const v = potentialOf(model, dh, dk, dl);
      potentialRe[i * size + j] = v.re;
      potentialIm[i * size + j] = v.im;
    }
  }
  return { maxSquare, vectors, size, potentialRe, potentialIm, real: model.real, kineticEv: model.kineticEv };
}

/** H = (ħ²/2m0)|k + G|² δ + V(G − G') at k (units of 2π/a) on the basis: real and imaginary parts, row-major. */
export function pseudopotentialHamiltonian(basis: PlaneWaveBasis, k: Wavevector): { re: Float64Array; im: Float64Array; size: number } {
  const re = basis.potentialRe.slice();
  const im = basis.potentialIm.slice();
  addKinetic(basis, k, re);
  return { re, im, size: basis.size };
}

function addKinetic(basis: PlaneWaveBasis, k: Wavevector, re: Float64Array): void {
  const [kx, ky, kz] = k.map((value) => requireFinite(value, "k"));
  const { size, vectors, kineticEv } = basis;
  for (let i = 0; i < size; i++) {
    const [h, kk, l] = vectors[i];
    const qx = kx + h;
    const qy = ky + kk;
    const qz = kz + l;
    re[i * size + i] = kineticEv * (qx * qx + qy * qy + qz * qz);
  }
}

/** All eigenvalues (eV, ascending) of H at k: the real solver when H is real, the Hermitian one otherwise. */
export function bandEnergiesEv(basis: PlaneWaveBasis, k: Wavevector): Float64Array {
  const re = basis.potentialRe.slice();
  addKinetic(basis, k, re);
  if (basis.real) return symmetricEigenvalues(re, basis.size);
  return hermitianEigenvalues(re, basis.potentialIm.slice(), basis.size);
}

export interface ConvergenceStep {
  maxSquare: number;
  planeWaves: number;
  gammaEv: number;
  xEv: number;
  lEv: number;
}

export interface RegistryGaps {
  /** Eg(Γ) = E5(Γ) − E4(Γ). */
  gammaEv: number;
  /** Eg(X) = E5(X) − E4(Γ). */
  xEv: number;
  /** Eg(L) = E5(L) − E4(Γ). */
  lEv: number;
  /** E4(Γ), the valence maximum, measured from V(0) = 0. */
  valenceMaximumEv: number;
}

/** The gaps at Γ, X and L the way the registry keeps them, all from the valence maximum E4(Γ). */
export function registryGaps(basis: PlaneWaveBasis): RegistryGaps {
  const gamma = bandEnergiesEv(basis, SYMMETRY_POINTS.Γ);
  const x = bandEnergiesEv(basis, SYMMETRY_POINTS.X);
  const l = bandEnergiesEv(basis, SYMMETRY_POINTS.L);
  const top = gamma[VALENCE_BANDS - 1];
  return { gammaEv: gamma[VALENCE_BANDS] - top, xEv: x[VALENCE_BANDS] - top, lEv: l[VALENCE_BANDS] - top, valenceMaximumEv: top };
}

export interface EpmConvergenceOptions {
  /** The basis grows shell by shell until Eg(Γ), Eg(X) and Eg(L) each move by less than this; default 1 meV. */
  convergenceEv?: number;
  /** The largest basis tried; default 283 plane waves (|G|² ≤ 40), which bounds the work one check can ask for. */
  maxPlaneWaves?: number;
}

export interface ConvergedBasis {
  basis: PlaneWaveBasis;
  gaps: RegistryGaps;
  converged: boolean;
  /** Every basis tried, smallest first; the last is the one chosen. */
  steps: ConvergenceStep[];
}

/**
 * Grows the basis |G|² ≤ Gmax² one shell at a time from |G|² ≤ 11 until the three registry gaps move by less than
 * the convergence threshold from one shell to the next; the chosen basis is the larger of the last two.
 */
export function convergedBasis(crystal: PseudopotentialCrystal, options: EpmConvergenceOptions = {}): ConvergedBasis {
  const model = modelOf(crystal);
  const tolerance = requirePositive(options.convergenceEv ?? DEFAULT_EPM_CONVERGENCE_EV, "convergence threshold");
  const maxPlaneWaves = requirePositiveInteger(options.maxPlaneWaves ?? DEFAULT_EPM_MAX_PLANE_WAVES, "plane-wave cap");
  const shells = fccShells(120).filter((square) => square >= FIRST_BASIS_SQUARE);
  const steps: ConvergenceStep[] = [];
  let previous: { basis: PlaneWaveBasis; gaps: RegistryGaps } | null = null;
  for (const maxSquare of shells) {
    const basis = basisOf(model, maxSquare);
    if (basis.size > maxPlaneWaves) break;
    const gaps = registryGaps(basis);
    steps.push({ maxSquare, planeWaves: basis.size, gammaEv: gaps.gammaEv, xEv: gaps.xEv, lEv: gaps.lEv });
    if (previous) {
      const change = Math.max(
        Math.abs(gaps.gammaEv - previous.gaps.gammaEv),
        Math.abs(gaps.xEv - previous.gaps.xEv),
        Math.abs(gaps.lEv - previous.gaps.lEv),
      );
      if (change < tolerance) return { basis, gaps, converged: true, steps };
    }
    previous = { basis, gaps };
  }
  if (!previous) throw new RangeError(`plane-wave cap ${maxPlaneWaves} is below the ${basisOf(model, FIRST_BASIS_SQUARE).size} plane waves needed`);
  return { ...previous, converged: false, steps };
}

export interface LineMinimum {
  /** Lowest conduction energy (band 5) on the line, from the valence maximum E4(Γ), in eV. */
  gapEv: number;
  /** Where it lies, as a fraction of the way from the start to the end of the line. */
  fraction: number;
  k: [number, number, number];
}

const GOLDEN = (Math.sqrt(5) - 1) / 2;

/** The basis used to find where the Γ–X minimum lies before its energy is taken on the full basis (113 plane waves). */
export const LOCATING_BASIS_SQUARE = 20;

/**
 * The lowest band-5 energy on the straight line from `from` to `to`, on `basis`: a grid of `gridPoints` on the
 * smaller `locating` basis (default: the basis itself), then a golden-section search on it in the bracket around
 * the lowest grid point down to `fractionTolerance`, and the energy there on `basis`. The minimum of a smooth band
 * is flat, so a position found on a slightly smaller basis moves its energy by far less than the basis does.
 */
export function conductionMinimumOnLine(
  basis: PlaneWaveBasis,
  valenceMaximumEv: number,
  {
    from = SYMMETRY_POINTS.Γ,
    to = SYMMETRY_POINTS.X,
    locating = basis,
    gridPoints = 11,
    fractionTolerance = 2e-3,
  }: { from?: Wavevector; to?: Wavevector; locating?: PlaneWaveBasis; gridPoints?: number; fractionTolerance?: number } = {},
): LineMinimum {
  requirePositiveInteger(gridPoints - 1, "grid points − 1");
  const at = (t: number): [number, number, number] => [from[0] + t * (to[0] - from[0]), from[1] + t * (to[1] - from[1]), from[2] + t * (to[2] - from[2])];
  const energy = (t: number) => bandEnergiesEv(locating, at(t))[VALENCE_BANDS];
  const grid = Array.from({ length: gridPoints }, (_, i) => i / (gridPoints - 1));
  const values = grid.map(energy);
  let best = 0;
  for (let i = 1; i < values.length; i++) if (values[i] < values[best]) best = i;
  let bestT = grid[best];
  let bestE = values[best];
  let low = grid[Math.max(0, best - 1)];
  let high = grid[Math.min(grid.length - 1, best + 1)];
  let c = high - GOLDEN * (high - low);
  let d = low + GOLDEN * (high - low);
  let fc = energy(c);
  let fd = energy(d);
  while (high - low > fractionTolerance) {
    if (fc < fd) {
      high = d;
      d = c;
      fd = fc;
      c = high - GOLDEN * (high - low);
      fc = energy(c);
    } else {
      low = c;
      c = d;
      fc = fd;
      d = low + GOLDEN * (high - low);
      fd = energy(d);
    }
  }
  for (const [t, e] of [[c, fc], [d, fd]] as const) {
    if (e < bestE) {
      bestE = e;
      bestT = t;
    }
  }
  const k = at(bestT);
  const gapEv = (locating === basis ? bestE : bandEnergiesEv(basis, k)[VALENCE_BANDS]) - valenceMaximumEv;
  return { gapEv, fraction: bestT, k };
}

export interface BandPathPoint {
  /** Distance along the path in units of 2π/a. */
  distance: number;
  k: [number, number, number];
}

export interface BandPathLabel {
  label: string;
  distance: number;
}

export interface BandStructure {
  points: BandPathPoint[];
  labels: BandPathLabel[];
  /** bandsEv[b][i]: band b + 1 at points[i], measured from the valence maximum E4(Γ) = 0. */
  bandsEv: number[][];
  planeWaves: number;
  maxSquare: number;
  /** How far this basis puts the gaps at Γ, X and L from the converged ones (eV), where the check chose it. */
  deviationEv?: number;
}

/** The segments of the path L–Γ–X–U|K–Γ; U and K are equivalent points, so the path jumps from one to the other. */
export const BAND_PATH: readonly { from: keyof typeof SYMMETRY_POINTS; to: keyof typeof SYMMETRY_POINTS }[] = [
  { from: "L", to: "Γ" },
  { from: "Γ", to: "X" },
  { from: "X", to: "U" },
  { from: "K", to: "Γ" },
];

/**
 * About `count` k-points along L–Γ–X–U|K–Γ, spaced evenly by length. Each segment starts where the last ended; the
 * jump from U to the equivalent K keeps one point (their energies are the same), labelled "U|K".
 */
export function bandPath(count = 120): { points: BandPathPoint[]; labels: BandPathLabel[] } {
  requirePositiveInteger(count, "k-point count");
  const lengths = BAND_PATH.map(({ from, to }) => Math.hypot(...SYMMETRY_POINTS[to].map((v, i) => v - SYMMETRY_POINTS[from][i])));
  const total = lengths.reduce((a, b) => a + b, 0);
  const points: BandPathPoint[] = [];
  const labels: BandPathLabel[] = [{ label: BAND_PATH[0].from, distance: 0 }];
  let start = 0;
  BAND_PATH.forEach(({ from, to }, s) => {
    const a = SYMMETRY_POINTS[from];
    const b = SYMMETRY_POINTS[to];
    const steps = Math.max(2, Math.round(((count - 1) * lengths[s]) / total));
    for (let i = s === 0 ? 0 : 1; i <= steps; i++) {
      const t = i / steps;
      points.push({ distance: start + t * lengths[s], k: [a[0] + t * (b[0] - a[0]), a[1] + t * (b[1] - a[1]), a[2] + t * (b[2] - a[2])] });
    }
    start += lengths[s];
    const next = BAND_PATH[s + 1];
    labels.push({ label: next && next.from !== to ? `${to}|${next.from}` : to, distance: start });
  });
  return { points, labels };
}

/** The lowest `bandCount` bands along L–Γ–X–U|K–Γ on one basis, from the valence maximum E4(Γ). */
export function bandStructure(basis: PlaneWaveBasis, { count = 120, bandCount = 8 }: { count?: number; bandCount?: number } = {}): BandStructure {
  requirePositiveInteger(bandCount, "band count");
  const { points, labels } = bandPath(count);
  const top = bandEnergiesEv(basis, SYMMETRY_POINTS.Γ)[VALENCE_BANDS - 1];
  const bands = Math.min(bandCount, basis.size);
  const bandsEv = Array.from({ length: bands }, () => new Array<number>(points.length));
  points.forEach((point, column) => {
    const energies = bandEnergiesEv(basis, point.k);
    for (let b = 0; b < bands; b++) bandsEv[b][column] = energies[b] - top;
  });
  return { points, labels, bandsEv, planeWaves: basis.size, maxSquare: basis.maxSquare };
}

/** How far the plotted bands may sit from the converged gaps at Γ, X and L: a tenth of a pixel on the chart. */
export const PLOT_DEVIATION_EV = 5e-3;

// The smallest basis of the convergence run whose three gaps lie within PLOT_DEVIATION_EV of the chosen ones:
// a band structure costs about 120 diagonalisations, and n³ falls fast with the basis.
function plotBasis(model: Model, steps: readonly ConvergenceStep[], chosen: RegistryGaps): { basis: PlaneWaveBasis; deviationEv: number } {
  const deviation = (s: ConvergenceStep) =>
    Math.max(Math.abs(s.gammaEv - chosen.gammaEv), Math.abs(s.xEv - chosen.xEv), Math.abs(s.lEv - chosen.lEv));
  const step = steps.find((s) => deviation(s) <= PLOT_DEVIATION_EV) ?? steps[steps.length - 1];
  return { basis: basisOf(model, step.maxSquare), deviationEv: deviation(step) };
}

export type GapPoint = "gamma" | "x" | "l";
export const GAP_POINTS: readonly GapPoint[] = ["gamma", "x", "l"];
export const GAP_POINT_VALLEY: Record<GapPoint, "Γ" | "X" | "L"> = { gamma: "Γ", x: "X", l: "L" };

export interface PseudopotentialCheckInput extends PseudopotentialCrystal, EpmConvergenceOptions {
  stated?: Partial<Record<GapPoint, number | null>>;
  /** eV; default 0.15 (pass ≤ tol, warn ≤ 3·tol, fail beyond). */
  toleranceEv?: number;
  /** Also compute the band structure (about this many k-points); default none. */
  bandPoints?: number;
}

export interface GapResult {
  gapEv: number;
  statedEv: number | null;
  /** stated − computed, or null without a stated gap. */
  residualEv: number | null;
  verdict: Verdict;
}

export interface PseudopotentialCheck {
  structure: CrystalStructure;
  latticeAngstrom: number;
  formFactorsEv: FormFactors;
  gaps: Record<GapPoint, GapResult>;
  /** The lowest conduction energy along Γ–X (band 5) and where it lies. */
  gammaXMinimum: LineMinimum;
  /** The smallest gap: Γ, X, L, or Δ when the Γ–X minimum lies inside the line, below X. */
  fundamental: { gapEv: number; valley: "Γ" | "X" | "L" | "Δ" };
  planeWaves: number;
  maxSquare: number;
  converged: boolean;
  convergenceEv: number;
  steps: ConvergenceStep[];
  toleranceEv: number;
  verdict: Verdict;
  notes: string[];
  bands: BandStructure | null;
}

const SEVERITY: Record<Verdict, number> = { none: 0, pass: 1, warn: 2, fail: 3 };

export function worstVerdict(verdicts: readonly Verdict[]): Verdict {
  return verdicts.reduce<Verdict>((worst, v) => (SEVERITY[v] > SEVERITY[worst] ? v : worst), "none");
}

/**
 * The pseudopotential check of a crystal's stated gaps: the converged gaps at Γ, X and L, the Γ–X conduction
 * minimum, a verdict per stated gap and for the whole (the worst), and optionally the band structure.
 */
export function checkPseudopotential(input: PseudopotentialCheckInput): PseudopotentialCheck {
  const toleranceEv = requirePositive(input.toleranceEv ?? DEFAULT_EPM_TOLERANCE_EV, "tolerance");
  const convergenceEv = input.convergenceEv ?? DEFAULT_EPM_CONVERGENCE_EV;
  const { basis, gaps: computed, converged, steps } = convergedBasis(input, input);
  const notes: string[] = [];
  if (!converged) notes.push(`the gaps did not converge to ${convergenceEv * 1000} meV within ${basis.size} plane waves`);
  const values: Record<GapPoint, number> = { gamma: computed.gammaEv, x: computed.xEv, l: computed.lEv };
  const gaps = {} as Record<GapPoint, GapResult>;
  for (const point of GAP_POINTS) {
    const stated = input.stated?.[point];
    if (stated === null || stated === undefined) {
      gaps[point] = { gapEv: values[point], statedEv: null, residualEv: null, verdict: "none" };
      continue;
    }
    const residualEv = requireFinite(stated, `stated ${GAP_POINT_VALLEY[point]} gap`) - values[point];
    let verdict: Verdict = verdictFromResidual(residualEv, toleranceEv);
    if (verdict === "pass" && !converged) verdict = "warn";
    gaps[point] = { gapEv: values[point], statedEv: stated, residualEv, verdict };
  }
  const model = modelOf(input);
  const locating = basis.maxSquare > LOCATING_BASIS_SQUARE ? basisOf(model, LOCATING_BASIS_SQUARE) : basis;
  const gammaXMinimum = conductionMinimumOnLine(basis, computed.valenceMaximumEv, { locating });
  const candidates: { gapEv: number; valley: "Γ" | "X" | "L" | "Δ" }[] = [
    { gapEv: computed.gammaEv, valley: "Γ" },
    { gapEv: computed.xEv, valley: "X" },
    { gapEv: computed.lEv, valley: "L" },
  ];
  // Δ only where the minimum lies inside Γ–X and clearly below both ends (1 meV), not at a rounding of X.
  if (gammaXMinimum.fraction > 0.01 && gammaXMinimum.fraction < 0.99 && gammaXMinimum.gapEv < Math.min(computed.xEv, computed.gammaEv) - 1e-3) {
    candidates.push({ gapEv: gammaXMinimum.gapEv, valley: "Δ" });
    const statedX = input.stated?.x;
    if (statedX !== null && statedX !== undefined && gaps.x.verdict !== "pass" && Math.abs(statedX - gammaXMinimum.gapEv) <= toleranceEv) {
      notes.push(
        `the stated X gap matches the conduction minimum at ${gammaXMinimum.fraction.toFixed(2)} of Γ–X (${gammaXMinimum.gapEv.toFixed(3)} eV), not E5(X)`,
      );
    }
  }
  const fundamental = candidates.reduce((low, c) => (c.gapEv < low.gapEv ? c : low));
  const verdict = worstVerdict(GAP_POINTS.map((p) => gaps[p].verdict));
  let bands: BandStructure | null = null;
  if (input.bandPoints) {
    const plot = plotBasis(model, steps, computed);
    bands = { ...bandStructure(plot.basis, { count: input.bandPoints }), deviationEv: plot.deviationEv };
  }
  return {
    structure: input.structure,
    latticeAngstrom: input.latticeAngstrom,
    formFactorsEv: { ...input.formFactorsEv },
    gaps,
    gammaXMinimum,
    fundamental,
    planeWaves: basis.size,
    maxSquare: basis.maxSquare,
    converged,
    convergenceEv,
    steps,
    toleranceEv,
    verdict,
    notes,
    bands,
  };
}

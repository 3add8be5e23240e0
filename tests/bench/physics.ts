// Benchmark of the physics checks: `npm run bench:physics` (tsx tests/bench/physics.ts [entries]).
// 10,000 synthetic gap entries (a in 5–6.5 Å, 1–3 coefficients of 0.01–1 eV, either sign, a gap index up to the
// number of coefficients, a stated gap near 2|U_n|) through checkNfeGap, then E(k) curves of 201 k-points.
// Target: all checks under 1 s on a 2-core machine. The solver comparison times ml-matrix's
// EigenvalueDecomposition against ours on the very matrices the check diagonalised last.
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import {
  type NfeCheckInput,
  checkNfeGap,
  nfeBands,
  planeWaveHamiltonian,
  symmetricEigenvalues,
  zoneKPoints,
} from "../../app/domain/physics";

const ENTRIES = Number(process.argv[2] ?? 10_000);
const CURVES = 50;
const TARGET_MS = 1000;

// mulberry32: a small seeded generator, so every run checks the same entries.
function random(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const next = random(20240611);
const between = (low: number, high: number) => low + (high - low) * next();
const entries: NfeCheckInput[] = Array.from({ length: ENTRIES }, () => {
  const count = 1 + Math.floor(next() * 3);
  const coefficients = Array.from({ length: count }, (_, i) => ({
    n: i + 1,
    energyEv: between(0.01, 1) * (next() < 0.5 ? -1 : 1),
  }));
  const gapIndex = 1 + Math.floor(next() * count);
  const statedGapEv = 2 * Math.abs(coefficients[gapIndex - 1].energyEv) * between(0.9, 1.1);
  return { periodAngstrom: between(5, 6.5), coefficients, gapIndex, statedGapEv };
});

const median = (sorted: number[]) => sorted[Math.floor(sorted.length / 2)];

function runChecks() {
  const start = performance.now();
  const results = entries.map(checkNfeGap);
  return { ms: performance.now() - start, results };
}

const cold = runChecks();
const warm = runChecks();
const planeWaves = cold.results.map((r) => r.centralEquation.planeWaves).sort((a, b) => a - b);
const verdicts = cold.results.reduce<Record<string, number>>((tally, r) => {
  tally[r.verdict] = (tally[r.verdict] ?? 0) + 1;
  return tally;
}, {});
const unconverged = cold.results.filter((r) => !r.centralEquation.converged).length;

const k = zoneKPoints(201);
const curveStart = performance.now();
for (let i = 0; i < CURVES; i++) nfeBands(entries[i], k, { bandCount: 4 });
const curveMs = (performance.now() - curveStart) / CURVES;
const curvePlaneWaves = nfeBands(entries[0], k, { bandCount: 4 }).planeWaves;

// The last two diagonalisations of each check for the first 2,000 entries, by either solver: the basis grows by the
// highest coefficient order M a side, so they are N − M and N.
const sample = entries.slice(0, 2000).flatMap((entry, i) => {
  const halfWidth = (cold.results[i].centralEquation.planeWaves - 1) / 2;
  const step = Math.max(...entry.coefficients.map((c) => c.n));
  const kPiOverA = cold.results[i].kPiOverA;
  return [halfWidth - step, halfWidth].map((n) => planeWaveHamiltonian(entry, kPiOverA, n));
});
// Each solver gets its input in its own form, built before the clock starts; ours overwrites its copy.
const flat = sample.map((h) => Float64Array.from(h.flat()));
const matrices = sample.map((h) => new Matrix(h));
const time = (solve: (i: number) => unknown) => {
  const start = performance.now();
  for (let i = 0; i < sample.length; i++) solve(i);
  return ((performance.now() - start) / sample.length) * 1000;
};
const ours = (i: number) => symmetricEigenvalues(flat[i].slice(), sample[i].length);
const theirs = (i: number) => new EigenvalueDecomposition(matrices[i], { assumeSymmetric: true }).realEigenvalues;
time(ours);
time(theirs);
const oursUs = time(ours);
const theirsUs = time(theirs);

const total = cold.ms + curveMs;
const lines = [
  `NFE check of ${ENTRIES} synthetic gap entries`,
  `  total              ${cold.ms.toFixed(0)} ms cold, ${warm.ms.toFixed(0)} ms warm`,
  `  per entry          ${((cold.ms / ENTRIES) * 1000).toFixed(1)} µs cold, ${((warm.ms / ENTRIES) * 1000).toFixed(1)} µs warm`,
  `  plane waves        min ${planeWaves[0]}, median ${median(planeWaves)}, max ${planeWaves[planeWaves.length - 1]}`,
  `  not converged      ${unconverged}`,
  `  verdicts           ${Object.entries(verdicts).map(([v, n]) => `${v} ${n}`).join(", ")}`,
  `E(k), 4 bands at 201 k-points`,
  `  per curve          ${curveMs.toFixed(2)} ms (${curvePlaneWaves} plane waves)`,
  `Solvers on the checks' own matrices (${sample.length} matrices)`,
  `  ours (eigenvalues only)            ${oursUs.toFixed(1)} µs per matrix`,
  `  ml-matrix EigenvalueDecomposition  ${theirsUs.toFixed(1)} µs per matrix`,
  `All checks plus one curve: ${total.toFixed(0)} ms (cold) — target ${TARGET_MS} ms: ${total < TARGET_MS ? "met" : "MISSED"}`,
];
console.log(lines.join("\n"));

import fc from "fast-check";
import { eigs } from "mathjs";
import { EigenvalueDecomposition, Matrix } from "ml-matrix";
import { describe, expect, it } from "vitest";
import { HBAR2_OVER_2ME_EV_A2 } from "./constants";
import {
  DEFAULT_NFE_TOLERANCE_EV,
  MAX_RESOLUTION_EV,
  RELATIVE_CONVERGENCE,
  type PeriodicPotential,
  centralEquationEigenvaluesEv,
  centralEquationGap,
  checkNfeGap,
  firstOrderGap,
  freeElectronEnergyEv,
  gapWavevectorPiOverA,
  nfeBands,
  nfeVerdict,
  planeWaveHamiltonian,
  zoneBoundaryEnergyEv,
  zoneKPoints,
} from "./nfe";
import { expectPrinted } from "./test-support";
import { PhysicsInputError } from "./validate";

const GAAS_A = 5.65325; // Å, GaAs at 300 K [V01] (from memory)
const cosine = (energyEv: number, periodAngstrom = GAAS_A): PeriodicPotential => ({
  periodAngstrom,
  coefficients: [{ n: 1, energyEv }],
});

describe("free-electron energies", () => {
  it("ε(π/a) = 1.176593107 eV for a = 5.65325 Å (calc, [CODATA18])", () => {
    expectPrinted(zoneBoundaryEnergyEv(GAAS_A), "1.176593107", "calc");
  });

  it("scales as 1/m", () => {
    expect(zoneBoundaryEnergyEv(GAAS_A, 0.067)).toBeCloseTo(zoneBoundaryEnergyEv(GAAS_A) / 0.067, 12);
    expect(freeElectronEnergyEv(Math.PI / GAAS_A)).toBe(zoneBoundaryEnergyEv(GAAS_A));
  });

  it("places odd gaps at the zone boundary and even gaps at the zone centre", () => {
    expect([1, 2, 3, 4].map(gapWavevectorPiOverA)).toEqual([1, 0, 1, 0]);
  });
});

describe("two-band limit [Kittel] [AM]", () => {
  it("two plane waves give E± = ε(G/2) ± |U| = 1.076593107 / 1.276593107 eV at the boundary (calc)", () => {
    const [lower, upper] = centralEquationEigenvaluesEv(cosine(0.1), 1, { min: 0, max: 1 });
    expectPrinted(lower, "1.076593107", "calc");
    expectPrinted(upper, "1.276593107", "calc");
  });

  it("two plane waves give 0.932673971 / 1.444044105 eV at k = 0.9π/a (calc)", () => {
    const [lower, upper] = centralEquationEigenvaluesEv(cosine(0.1), 0.9, { min: 0, max: 1 });
    expectPrinted(lower, "0.932673971", "calc");
    expectPrinted(upper, "1.444044105", "calc");
  });

  it("first order is 2|U_n| with edges ε(nG/2) ± |U_n| [Kittel]", () => {
    const potential: PeriodicPotential = { periodAngstrom: GAAS_A, coefficients: [{ n: 1, energyEv: -0.1 }, { n: 2, energyEv: 0.03 }] };
    const e1 = zoneBoundaryEnergyEv(GAAS_A);
    expect(firstOrderGap(potential, 1)).toEqual({ gapEv: 0.2, lowerEv: e1 - 0.1, upperEv: e1 + 0.1 });
    const second = firstOrderGap(potential, 2);
    expect(second.gapEv).toBeCloseTo(0.06, 15);
    expect(second.lowerEv).toBeCloseTo(4 * e1 - 0.03, 12);
    expect(firstOrderGap(potential, 3).gapEv).toBe(0);
  });

  it("the converged edges sit within the second-order shift U²/(ε(3G/2) − ε(G/2)) of the two-band ones", () => {
    const e1 = zoneBoundaryEnergyEv(GAAS_A);
    const shift = 0.1 ** 2 / (9 * e1 - e1);
    const { lowerEv, upperEv, converged } = centralEquationGap(cosine(0.1));
    expect(converged).toBe(true);
    expect(Math.abs(lowerEv - 1.076593107)).toBeLessThan(1.5 * shift);
    expect(Math.abs(upperEv - 1.276593107)).toBeLessThan(1.5 * shift);
  });

  it("the gap tends to 2|U| as U → 0: gap/2U − 1 ≈ −q²/64 for a pure cosine [AS] 20.2.25", () => {
    const e1 = zoneBoundaryEnergyEv(GAAS_A);
    const deviations = [0.3, 0.1, 0.01, 0.001].map((u) => centralEquationGap(cosine(u)).gapEv / (2 * u) - 1);
    deviations.forEach((deviation, i) => {
      const q = [0.3, 0.1, 0.01, 0.001][i] / e1;
      expect(Math.abs(deviation)).toBeLessThanOrEqual(q * q / 32 + 1e-9);
    });
    expect(Math.abs(deviations[3])).toBeLessThan(Math.abs(deviations[0]));
  });

  it("the second gap of a pure cosine opens only at second order: U²/(2ε(π/a)) (calc, perturbation via k = 0)", () => {
    const u = 0.01;
    const e1 = zoneBoundaryEnergyEv(GAAS_A);
    expect(firstOrderGap(cosine(u), 2).gapEv).toBe(0);
    const { gapEv } = centralEquationGap(cosine(u), 2, { convergenceEv: 1e-12 });
    expect(gapEv / (u * u / (2 * e1))).toBeCloseTo(1, 3);
  });

  it("a potential written U0·cos(Gx) has U_1 = U0/2 and gap |U0|: the convention trap (calc)", () => {
    const u0 = 0.2;
    const right = checkNfeGap({ ...cosine(u0 / 2), statedGapEv: u0 });
    expect(right.firstOrder.gapEv).toBeCloseTo(u0, 15);
    expect(right.centralEquation.gapEv).toBeCloseTo(u0, 4);
    expect(right.verdict).toBe("pass");
    const trapped = checkNfeGap({ ...cosine(u0), statedGapEv: u0 });
    expect(trapped.firstOrder.gapEv).toBeCloseTo(2 * u0, 15);
    expect(trapped.verdict).toBe("fail");
    expect(trapped.notes.join(" ")).toMatch(/U_n = U0\/2/);
  });
});

// Mathieu's equation y'' + (a − 2q cos 2z) y = 0 [AS] 20.1.1. With U(x) = 2U cos(Gx) (U_1 = U) and z = Gx/2,
// −(ħ²/2m)ψ'' + 2U cos(Gx)ψ = Eψ becomes ψ_zz + (E/ε1 − 2(U/ε1) cos 2z)ψ = 0 with ε1 = (ħ²/2m)(G/2)² = ε(π/a):
// a = E/ε1 and q = +U/ε1 in this sign convention. U → −U gives q → −q, which z → z + π/2 undoes (swapping
// a_r and b_r for odd r), so the spectrum is the same. Bloch at k = π/a: ψ(x + a) = −ψ(x), i.e. y(z + π) = −y(z),
// the period-2π solutions ce1, se1: edges ε1·b1 (lower for q > 0) and ε1·a1. At k = 0: y(z + π) = y(z), the
// period-π solutions ce0, se2, ce2: band bottom ε1·a0 and second-gap edges ε1·b2, ε1·a2.
describe("central equation against Mathieu characteristic values, q = 5 [AS] Table 20.1", () => {
  const e1 = zoneBoundaryEnergyEv(GAAS_A);
  const strong = cosine(5 * e1);
  // Table values are printed to 8 decimals; allow the 1e-9 eV convergence threshold on top, in units of ε1.
  const slack = 1e-9 / e1;

  for (const sign of [1, -1]) {
    const potential = cosine(sign * 5 * e1);
    it(`first gap edges are ε1·b1 and ε1·a1 (U = ${sign > 0 ? "+" : "−"}5ε1)`, () => {
      const gap = centralEquationGap(potential, 1);
      expect(gap.converged).toBe(true);
      expectPrinted(gap.lowerEv / e1, "-5.79008060", "AS", slack);
      expectPrinted(gap.upperEv / e1, "1.85818754", "AS", slack);
    });
  }

  it("band bottom at k = 0 is ε1·a0", () => {
    const [bottom] = nfeBands(strong, [0], { bandCount: 1 }).bandsEv;
    expectPrinted(bottom[0] / e1, "-5.80004602", "AS", slack);
  });

  it("second gap edges at k = 0 are ε1·b2 and ε1·a2", () => {
    const gap = centralEquationGap(strong, 2);
    expect(gap.converged).toBe(true);
    expectPrinted(gap.lowerEv / e1, "2.09946045", "AS", slack);
    expectPrinted(gap.upperEv / e1, "7.44910974", "AS", slack);
  });

  it("first order (2|U| = 10 ε1) is far off for so strong a potential, and the check says so", () => {
    const check = checkNfeGap({ ...strong, statedGapEv: 10 * e1 });
    expect(check.verdict).toBe("fail");
    expect(check.notes.join(" ")).toMatch(/not weak/);
  });
});

describe("basis convergence", () => {
  it("reports an odd number of plane waves and converges for ordinary coefficients", () => {
    const gap = centralEquationGap({ periodAngstrom: GAAS_A, coefficients: [{ n: 1, energyEv: 0.5 }, { n: 2, energyEv: 0.2 }] });
    expect(gap.converged).toBe(true);
    expect(gap.planeWaves % 2).toBe(1);
    const bigger = centralEquationEigenvaluesEv(
      { periodAngstrom: GAAS_A, coefficients: [{ n: 1, energyEv: 0.5 }, { n: 2, energyEv: 0.2 }] },
      1,
      40,
    );
    expect(Math.abs(bigger[0] - gap.lowerEv)).toBeLessThan(1e-9);
    expect(Math.abs(bigger[1] - gap.upperEv)).toBeLessThan(1e-9);
  });

  it("says so when the cap stops it, and a pass becomes a warn", () => {
    const e1 = zoneBoundaryEnergyEv(GAAS_A);
    const exact = centralEquationGap(cosine(5 * e1)).gapEv;
    const capped = checkNfeGap({ ...cosine(5 * e1), statedGapEv: exact, maxPlaneWaves: 7 });
    expect(capped.centralEquation.converged).toBe(false);
    expect(capped.centralEquation.planeWaves).toBe(7);
    expect(capped.verdict).toBe("warn");
    expect(capped.notes.join(" ")).toMatch(/did not converge/);
  });

  it("refuses a cap smaller than the bands asked for, and bad input", () => {
    expect(() => centralEquationGap(cosine(0.1), 5, { maxPlaneWaves: 3 })).toThrow(RangeError);
    expect(() => centralEquationGap(cosine(0.1, 0))).toThrow(/period/);
    expect(() => centralEquationGap({ periodAngstrom: 5, coefficients: [{ n: 0, energyEv: 0.1 }] })).toThrow(RangeError);
    expect(() =>
      centralEquationGap({ periodAngstrom: 5, coefficients: [{ n: 1, energyEv: 0.1 }, { n: 1, energyEv: 0.2 }] }),
    ).toThrow(/twice/);
    expect(() => centralEquationGap({ ...cosine(0.1), massM0: -1 })).toThrow(/mass/);
  });

  it("a band mass m is the same as a period a·√m for the same U (ε ∝ 1/(m a²))", () => {
    const heavy = centralEquationGap({ ...cosine(0.3), massM0: 2 });
    const wide = centralEquationGap(cosine(0.3, GAAS_A * Math.SQRT2));
    expect(heavy.gapEv).toBeCloseTo(wide.gapEv, 9);
    expect(heavy.lowerEv).toBeCloseTo(wide.lowerEv, 9);
  });
});

// The reference: the central-equation Hamiltonian written out here from its formula [Kittel ch. 7] for a fixed, large
// basis, diagonalised by mathjs `eigs` (Jacobi rotations, which keep small eigenvalues of such graded matrices to
// their own relative precision). Gap n lies between eigenvalues n − 1 and n at k = π/a (odd n) or 0 (even n).
function referenceGap(potential: PeriodicPotential, gapIndex: number, halfWidth = 40): { gapEv: number; lowerEv: number; upperEv: number } {
  const g = (2 * Math.PI) / potential.periodAngstrom;
  const kinetic = HBAR2_OVER_2ME_EV_A2 / (potential.massM0 ?? 1);
  const k = gapIndex % 2 === 1 ? g / 2 : 0;
  const u = new Map(potential.coefficients.map((c) => [c.n, c.energyEv]));
  const size = 2 * halfWidth + 1;
  const h = Array.from({ length: size }, (_, i) =>
    Array.from({ length: size }, (_, j) => (i === j ? kinetic * (k - (i - halfWidth) * g) ** 2 : (u.get(Math.abs(i - j)) ?? 0))),
  );
  const values = (eigs(h, { eigenvectors: false }).values as number[]).slice().sort((x, y) => x - y);
  return { lowerEv: values[gapIndex - 1], upperEv: values[gapIndex], gapEv: values[gapIndex] - values[gapIndex - 1] };
}

function expectSameGap(actual: { gapEv: number; lowerEv: number; upperEv: number }, expected: typeof actual, slack: number) {
  expect(Math.abs(actual.gapEv - expected.gapEv), `gap ${actual.gapEv} against ${expected.gapEv}`).toBeLessThanOrEqual(slack);
  expect(Math.abs(actual.lowerEv - expected.lowerEv)).toBeLessThanOrEqual(slack);
  expect(Math.abs(actual.upperEv - expected.upperEv)).toBeLessThanOrEqual(slack);
}

// U_n couples only plane waves whose orders differ by n. A basis grown by one plane wave a side adds, when every n
// shares a factor, waves the gap's states never meet: that step changes nothing and used to stop the loop.
describe("harmonics with a common factor, or a dominant n ≥ 2", () => {
  it("a = 10 Å, U_3 = 3 eV, m = 10 m0: gap 6 is 3.124805 eV as mathjs gives it on 121 plane waves, not 3.141608 eV", () => {
    const potential: PeriodicPotential = { periodAngstrom: 10, coefficients: [{ n: 3, energyEv: 3 }], massM0: 10 };
    const gap = centralEquationGap(potential, 6);
    expect(gap.converged).toBe(true);
    expectSameGap(gap, referenceGap(potential, 6, 60), 2e-9);
    expectPrinted(gap.gapEv, "3.124805", "calc");
  });

  // U_n alone is a cosine of period a/n: its gaps r·n are the gaps r of that lattice, whose boundary energy is
  // ε1' = ε(nπ/a) = n²ε(π/a), so the Mathieu values of q = U_n/ε1' apply [AS] Table 20.1.
  const e1 = zoneBoundaryEnergyEv(GAAS_A);
  const slack = (scale: number) => 2e-9 / scale;
  for (const [n, gapIndex, lower, upper, names] of [
    [2, 2, "-5.79008060", "1.85818754", "b1, a1"],
    [2, 4, "2.09946045", "7.44910974", "b2, a2"],
    [3, 6, "2.09946045", "7.44910974", "b2, a2"],
  ] as const) {
    it(`U_${n} alone with q = 5: gap ${gapIndex} edges are ε(${n}π/a)·(${names}) [AS]`, () => {
      const scale = n * n * e1;
      const gap = centralEquationGap({ periodAngstrom: GAAS_A, coefficients: [{ n, energyEv: 5 * scale }] }, gapIndex);
      expect(gap.converged).toBe(true);
      expectPrinted(gap.lowerEv / scale, lower, "AS", slack(scale));
      expectPrinted(gap.upperEv / scale, upper, "AS", slack(scale));
    });
  }

  it("U_2 and U_4 (a common factor 2), and a dominant U_3 with a weak U_1: gaps 6 and 8 agree with mathjs", () => {
    const cases: [PeriodicPotential, number][] = [
      [{ periodAngstrom: 10, coefficients: [{ n: 2, energyEv: 3 }, { n: 4, energyEv: -2 }], massM0: 10 }, 8],
      [{ periodAngstrom: 10, coefficients: [{ n: 2, energyEv: 3 }, { n: 4, energyEv: -2 }], massM0: 10 }, 6],
      [{ periodAngstrom: 8, coefficients: [{ n: 1, energyEv: 0.002 }, { n: 3, energyEv: 2.5 }], massM0: 5 }, 6],
      [{ periodAngstrom: 8, coefficients: [{ n: 1, energyEv: 0.002 }, { n: 3, energyEv: 2.5 }], massM0: 5 }, 8],
    ];
    for (const [potential, gapIndex] of cases) {
      const gap = centralEquationGap(potential, gapIndex);
      expect(gap.converged).toBe(true);
      expectSameGap(gap, referenceGap(potential, gapIndex), 2e-9);
    }
  });

  // mathjs diagonalises 81×81 matrices here, a second or more under load: the test may take its time.
  it("for coefficients at multiples of 2 or 3 (with or without a weak U_1), gaps 6 and 8 agree with mathjs", { timeout: 60_000 }, () => {
    fc.assert(
      fc.property(
        fc.double({ min: 5, max: 10, noNaN: true }),
        fc.double({ min: 1, max: 10, noNaN: true }),
        fc.constantFrom(2, 3),
        fc.array(fc.double({ min: 0.05, max: 3, noNaN: true }), { minLength: 1, maxLength: 2 }),
        fc.option(fc.double({ min: 0.001, max: 0.01, noNaN: true })),
        fc.constantFrom(6, 8),
        (periodAngstrom, massM0, d, strengths, weak, gapIndex) => {
          const coefficients = strengths.map((energyEv, i) => ({ n: d * (i + 1), energyEv: i % 2 ? -energyEv : energyEv }));
          if (weak !== null) coefficients.push({ n: 1, energyEv: weak });
          const potential = { periodAngstrom, massM0, coefficients };
          const gap = centralEquationGap(potential, gapIndex);
          expect(gap.converged).toBe(true);
          expectSameGap(gap, referenceGap(potential, gapIndex), 3e-9);
        },
      ),
      { numRuns: 16 },
    );
  });

  it("a high order gets room for two steps of its size: U_1 = U_50 = 0.1 eV converges, beside ml-matrix on 321 waves", () => {
    const potential: PeriodicPotential = { periodAngstrom: GAAS_A, coefficients: [{ n: 1, energyEv: 0.1 }, { n: 50, energyEv: 0.1 }] };
    const gap = centralEquationGap(potential);
    expect(gap.converged).toBe(true);
    expect(gap.planeWaves).toBeGreaterThan(201);
    const h = planeWaveHamiltonian(potential, 1, 160);
    const values = new EigenvalueDecomposition(new Matrix(h), { assumeSymmetric: true }).realEigenvalues.sort((x, y) => x - y);
    expectSameGap(gap, { lowerEv: values[0], upperEv: values[1], gapEv: values[1] - values[0] }, 2e-9);
  });
});

describe("energy scales double precision can and cannot resolve", () => {
  it("refuses a period of 1e-30 Å (it gave a gap of 0) and 1e-6 Å (1.0078 eV for a true 1 eV), naming the period", () => {
    for (const periodAngstrom of [1e-30, 1e-6]) {
      const run = () => centralEquationGap(cosine(0.5, periodAngstrom));
      expect(run).toThrow(PhysicsInputError);
      expect(run).toThrow(/period .* too small.*at least 0\.0123 Å/);
      try {
        run();
      } catch (e) {
        expect((e as PhysicsInputError).field).toBe("period");
      }
    }
    expect(() => checkNfeGap({ ...cosine(0.5, 1e-6), statedGapEv: 1 })).toThrow(PhysicsInputError);
    expect(() => nfeBands(cosine(0.5, 1e-6))).toThrow(PhysicsInputError);
  });

  it("refuses a mass that makes the scale too large at an ordinary period, naming the mass", () => {
    let error: unknown;
    try {
      centralEquationGap({ ...cosine(0.5), massM0: 1e-7 });
    } catch (e) {
      error = e;
    }
    expect(error).toBeInstanceOf(PhysicsInputError);
    expect((error as PhysicsInputError).field).toBe("mass");
    expect((error as Error).message).toMatch(/mass .* too small/);
  });

  it("a higher gap lies at a larger scale ε(nG/2): the same period is refused for gap 20 and not for gap 1", () => {
    const periodAngstrom = 0.03;
    expect(centralEquationGap(cosine(0.5, periodAngstrom), 1).converged).toBe(true);
    expect(() => centralEquationGap(cosine(0.5, periodAngstrom), 20)).toThrow(PhysicsInputError);
  });

  // At a = 0.015 Å, ħ²G²/2m = 6.7e5 eV: rounding moves the eigenvalues by about ε·N²·6.7e5 eV, more than 1e-9 eV,
  // so an absolute threshold alone ran to the 201-wave cap. The relative one stops where the numbers stop moving.
  it("converges against a threshold relative to ħ²G²/2m where the energies are large, and agrees with mathjs", () => {
    const potential: PeriodicPotential = { periodAngstrom: 0.015, coefficients: [{ n: 1, energyEv: 0.5 }, { n: 2, energyEv: 0.3 }, { n: 3, energyEv: -0.2 }] };
    const scale = HBAR2_OVER_2ME_EV_A2 * ((2 * Math.PI) / 0.015) ** 2;
    const gap = centralEquationGap(potential, 1);
    expect(gap.converged).toBe(true);
    expect(gap.planeWaves).toBeLessThan(51);
    expect(gap.thresholdEv).toBeCloseTo(RELATIVE_CONVERGENCE * scale, 12);
    expect(gap.thresholdEv).toBeLessThanOrEqual(MAX_RESOLUTION_EV);
    expectSameGap(gap, referenceGap(potential, 1, 30), 2 * gap.thresholdEv);
    // Ordinary inputs keep the absolute threshold.
    expect(centralEquationGap(cosine(0.1)).thresholdEv).toBe(1e-9);
  });
});

describe("verdict", () => {
  const base = { centralGapEv: 1, firstOrderGapEv: 1, toleranceEv: 0.01, converged: true };

  it("is none without a stated gap", () => {
    expect(nfeVerdict({ ...base, statedGapEv: null })).toEqual({ verdict: "none", residualEv: null, notes: [] });
    expect(checkNfeGap(cosine(0.1)).verdict).toBe("none");
    expect(checkNfeGap(cosine(0.1)).toleranceEv).toBe(DEFAULT_NFE_TOLERANCE_EV);
  });

  it("passes within the tolerance, warns up to three times it, fails beyond; residual = stated − central", () => {
    expect(nfeVerdict({ ...base, statedGapEv: 1.0099 }).verdict).toBe("pass");
    expect(nfeVerdict({ ...base, statedGapEv: 0.9901 }).verdict).toBe("pass");
    expect(nfeVerdict({ ...base, statedGapEv: 1.0101 }).verdict).toBe("warn");
    expect(nfeVerdict({ ...base, statedGapEv: 0.9701 }).verdict).toBe("warn");
    expect(nfeVerdict({ ...base, statedGapEv: 1.0301 }).verdict).toBe("fail");
    expect(nfeVerdict({ ...base, statedGapEv: 0.9699 }).verdict).toBe("fail");
    expect(nfeVerdict({ ...base, statedGapEv: 1.02 }).residualEv).toBeCloseTo(0.02, 15);
    expect(nfeVerdict({ ...base, statedGapEv: 0.97 }).residualEv).toBeCloseTo(-0.03, 15);
    expect(() => nfeVerdict({ ...base, statedGapEv: 1, toleranceEv: 0 })).toThrow(/tolerance/);
  });

  it("rests on the central equation alone: a first-order disagreement is a note, not a downgrade", () => {
    const result = nfeVerdict({ ...base, firstOrderGapEv: 1.2, statedGapEv: 1 });
    expect(result.verdict).toBe("pass");
    expect(result.notes).toHaveLength(1);
    const firstOrderOnly = nfeVerdict({ ...base, firstOrderGapEv: 1.2, statedGapEv: 1.2 });
    expect(firstOrderOnly.verdict).toBe("fail");
    expect(firstOrderOnly.notes.join(" ")).toMatch(/first-order estimate/);
  });
});

describe("E(k) in the reduced zone", () => {
  it("samples 201 k-points from −π/a to π/a by default", () => {
    const k = zoneKPoints();
    expect(k).toHaveLength(201);
    expect(k[0]).toBe(-1);
    expect(k[100]).toBe(0);
    expect(k[200]).toBe(1);
  });

  it("returns the bands and the folded free-electron parabolas, band edges agreeing with the gap", () => {
    const potential: PeriodicPotential = { periodAngstrom: GAAS_A, coefficients: [{ n: 1, energyEv: 0.3 }] };
    const bands = nfeBands(potential, undefined, { bandCount: 3 });
    expect(bands.bandsEv).toHaveLength(3);
    expect(bands.freeElectronEv).toHaveLength(3);
    expect(bands.bandsEv[0]).toHaveLength(201);
    expect(bands.converged).toBe(true);
    const gap = centralEquationGap(potential, 1);
    expect(bands.bandsEv[0][200]).toBeCloseTo(gap.lowerEv, 9);
    expect(bands.bandsEv[1][200]).toBeCloseTo(gap.upperEv, 9);
    const e1 = zoneBoundaryEnergyEv(GAAS_A);
    expect(bands.freeElectronEv[0][200]).toBeCloseTo(e1, 12);
    expect(bands.freeElectronEv[1][100]).toBeCloseTo(4 * e1, 12);
    expect(bands.freeElectronEv[0][100]).toBeCloseTo(0, 12);
  });
});

// fast-check arbitraries: periods 5–6.5 Å, up to three coefficients of 0.01–1 eV either sign.
const period = fc.double({ min: 5, max: 6.5, noNaN: true });
const magnitude = fc.double({ min: 0.01, max: 1, noNaN: true });
const signed = fc.tuple(magnitude, fc.boolean()).map(([m, negative]) => (negative ? -m : m));
const coefficients = fc
  .array(signed, { minLength: 1, maxLength: 3 })
  .map((values) => values.map((energyEv, i) => ({ n: i + 1, energyEv })));

describe("properties", () => {
  it("the gap is even in U for a single coefficient U_n", () => {
    fc.assert(
      fc.property(period, magnitude, fc.integer({ min: 1, max: 3 }), fc.integer({ min: 1, max: 4 }), (a, u, n, gap) => {
        const plus = centralEquationGap({ periodAngstrom: a, coefficients: [{ n, energyEv: u }] }, gap);
        const minus = centralEquationGap({ periodAngstrom: a, coefficients: [{ n, energyEv: -u }] }, gap);
        expect(Math.abs(plus.gapEv - minus.gapEv)).toBeLessThan(2e-9);
      }),
      { numRuns: 60 },
    );
  });

  // With several coefficients the symmetry is the half-period shift x → x + a/2, U_n → (−1)^n U_n; flipping
  // every sign is not a symmetry (the U_1·U_2 cross term of second order changes sign against U_1).
  it("the gap is unchanged by U_n → (−1)^n U_n, not by flipping every sign", () => {
    fc.assert(
      fc.property(period, coefficients, fc.integer({ min: 1, max: 3 }), (a, cs, gap) => {
        const shifted = cs.map((c) => ({ n: c.n, energyEv: c.n % 2 === 1 ? -c.energyEv : c.energyEv }));
        const one = centralEquationGap({ periodAngstrom: a, coefficients: cs }, gap);
        const other = centralEquationGap({ periodAngstrom: a, coefficients: shifted }, gap);
        expect(Math.abs(one.gapEv - other.gapEv)).toBeLessThan(2e-9);
      }),
      { numRuns: 60 },
    );
    const both = (sign: number) =>
      centralEquationGap({ periodAngstrom: GAAS_A, coefficients: [{ n: 1, energyEv: sign * 0.5 }, { n: 2, energyEv: sign * 0.3 }] }).gapEv;
    expect(Math.abs(both(1) - both(-1))).toBeGreaterThan(1e-3);
  });

  it("the lowest band edge never rises as the basis grows (variational, Cauchy interlacing)", () => {
    fc.assert(
      fc.property(period, coefficients, fc.double({ min: -1, max: 1, noNaN: true }), (a, cs, k) => {
        let previous = Number.POSITIVE_INFINITY;
        for (let halfWidth = 0; halfWidth <= 8; halfWidth++) {
          const [lowest] = centralEquationEigenvaluesEv({ periodAngstrom: a, coefficients: cs }, k, halfWidth);
          expect(lowest).toBeLessThanOrEqual(previous + 1e-12);
          previous = lowest;
        }
      }),
      { numRuns: 60 },
    );
  });

  it("E(k) = E(−k) and E(k) = E(k + G)", () => {
    fc.assert(
      fc.property(period, coefficients, fc.double({ min: -1, max: 1, noNaN: true }), (a, cs, k) => {
        const { bandsEv } = nfeBands({ periodAngstrom: a, coefficients: cs }, [k, -k, k + 2, k - 2], { bandCount: 3 });
        for (const band of bandsEv) {
          expect(Math.abs(band[0] - band[1])).toBeLessThan(1e-10);
          expect(Math.abs(band[0] - band[2])).toBeLessThan(1e-8);
          expect(Math.abs(band[0] - band[3])).toBeLessThan(1e-8);
        }
      }),
      { numRuns: 40 },
    );
  });
});

describe("the plane-wave Hamiltonian", () => {
  it("is symmetric with the kinetic diagonal and U_|m−m'| off it", () => {
    const h = planeWaveHamiltonian({ periodAngstrom: GAAS_A, coefficients: [{ n: 1, energyEv: 0.5 }, { n: 3, energyEv: -0.1 }] }, 0.5, 2);
    const e1 = zoneBoundaryEnergyEv(GAAS_A);
    expect(h).toHaveLength(5);
    // m = −2..2 at k = 0.5 π/a: (k − mG)² in units of (π/a)² is (0.5 − 2m)².
    h.forEach((row, i) => expect(row[i]).toBeCloseTo(e1 * (0.5 - 2 * (i - 2)) ** 2, 12));
    expect([h[0][1], h[1][0], h[0][2], h[0][3], h[3][0], h[0][4]]).toEqual([0.5, 0.5, 0, -0.1, -0.1, 0]);
  });
});

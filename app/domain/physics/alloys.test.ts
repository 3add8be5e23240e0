import fc from "fast-check";
import { describe, expect, it } from "vitest";
import {
  bowedGapAtTemperature,
  bowedGapEv,
  bowingCurveAtTemperature,
  crossoverComposition,
  latticeMatchedComposition,
  vegardLatticeAngstrom,
} from "./alloys";
import { varshniGap } from "./varshni";
import { expectPrinted } from "./test-support";

// Al(x)Ga(1−x)As [V01] (table values from memory): A = AlAs, B = GaAs.
const algaas = { aAAngstrom: 5.6611, aBAngstrom: 5.65325 };
const gammaBowing = { egAEv: 3.099, egBEv: 1.519, c0Ev: -0.127, c1Ev: 1.31 };
const alas = { eg0Ev: 3.099, alphaMevPerK: 0.885, betaK: 530 };
const gaas = { eg0Ev: 1.519, alphaMevPerK: 0.5405, betaK: 204 };

describe("Vegard's law [Vegard21]", () => {
  it("gives a = 5.655605 Å for Al(0.3)Ga(0.7)As (calc with [V01])", () => {
    expectPrinted(vegardLatticeAngstrom(algaas, 0.3), "5.655605", "calc");
  });

  it("inverts to the lattice-matched composition, null outside [0, 1]", () => {
    expect(latticeMatchedComposition(algaas, 5.655605)).toBeCloseTo(0.3, 12);
    expect(latticeMatchedComposition(algaas, 5.65325)).toBe(0);
    expect(latticeMatchedComposition(algaas, 5.431020511)).toBeNull(); // Si [CODATA18]
    expect(latticeMatchedComposition({ aAAngstrom: 5.5, aBAngstrom: 5.5 }, 5.5)).toBeNull();
  });

  it("refuses compositions outside [0, 1]", () => {
    expect(() => vegardLatticeAngstrom(algaas, 1.2)).toThrow(/composition/);
  });
});

describe("bowing [V01]", () => {
  it("bows the Al(x)Ga(1−x)As Γ gap with C = −0.127 + 1.310x (calc)", () => {
    // 0.3·3.099 + 0.7·1.519 − 0.21·(−0.127 + 0.393) = 1.93714 eV
    expect(bowedGapEv(gammaBowing, 0.3)).toBeCloseTo(1.93714, 12);
  });

  it("moves the end points to temperature with Varshni first, C independent of T [V01] [Var67]", () => {
    const curve = bowingCurveAtTemperature({ a: alas, b: gaas, c0Ev: -0.127, c1Ev: 1.31 }, 300);
    expectPrinted(curve.egBEv, "1.4224821", "calc");
    expect(curve.egAEv).toBeCloseTo(varshniGap(alas, 300).valueEv, 15);
    const atT = bowedGapAtTemperature({ a: alas, b: gaas, c0Ev: -0.127, c1Ev: 1.31 }, 0.3, 300);
    expect(atT.valueEv).toBeCloseTo(bowedGapEv(curve, 0.3), 15);
    expect(atT.warnings).toEqual([]);
  });

  it("passes end-point range warnings on", () => {
    const fitted = { ...alas, fittedRangeK: { minK: 0, maxK: 300 } };
    const { warnings } = bowedGapAtTemperature({ a: fitted, b: gaas, c0Ev: 0 }, 0.5, 500);
    expect(warnings).toHaveLength(1);
    expect(warnings[0]).toMatch(/end point A/);
  });

  it("returns the end points at x = 0 and x = 1 (property)", () => {
    // (+ 0 turns −0 into 0, which the formula cannot tell apart.)
    const energy = fc.double({ min: -5, max: 5, noNaN: true }).map((v) => v + 0);
    fc.assert(
      fc.property(energy, energy, energy, energy, (egAEv, egBEv, c0Ev, c1Ev) => {
        expect(bowedGapEv({ egAEv, egBEv, c0Ev, c1Ev }, 1)).toBe(egAEv);
        expect(bowedGapEv({ egAEv, egBEv, c0Ev, c1Ev }, 0)).toBe(egBEv);
      }),
    );
  });
});

describe("crossover composition", () => {
  it("finds the root of two straight lines exactly", () => {
    // 1 + x against 1.5 − x meet at x = 0.25.
    const x = crossoverComposition({ egAEv: 2, egBEv: 1, c0Ev: 0 }, { egAEv: 0.5, egBEv: 1.5, c0Ev: 0 });
    expect(x).toBeCloseTo(0.25, 14);
  });

  it("finds where a bowed Γ gap with composition-dependent C meets a flat indirect gap", () => {
    const indirect = { egAEv: 2, egBEv: 2, c0Ev: 0 };
    const x = crossoverComposition(gammaBowing, indirect)!;
    expect(x).toBeGreaterThan(0);
    expect(x).toBeLessThan(1);
    expect(bowedGapEv(gammaBowing, x)).toBeCloseTo(2, 12);
  });

  it("is null when the curves do not cross in [0, 1]", () => {
    expect(crossoverComposition(gammaBowing, { egAEv: 5, egBEv: 4, c0Ev: 0 })).toBeNull();
  });
});

import { describe, expect, it } from "vitest";
import { latticeAtTemperature, varshniAlphaEvPerK, varshniGap } from "./varshni";
import { expectPrinted } from "./test-support";

// GaAs Γ [V01] (from memory): Eg(0) = 1.519 eV, α = 0.5405 meV/K, β = 204 K.
const gaasGamma = { eg0Ev: 1.519, alphaMevPerK: 0.5405, betaK: 204 };

describe("Varshni [Var67]", () => {
  it("gives 1.4224821 eV at 300 K for GaAs Γ (calc with [V01])", () => {
    expectPrinted(varshniGap(gaasGamma, 300).valueEv, "1.4224821", "calc");
  });

  it("gives 1.507596 eV at 77 K (calc with [V01])", () => {
    expectPrinted(varshniGap(gaasGamma, 77).valueEv, "1.507596", "calc");
  });

  it("returns Eg(0) at 0 K and takes α in eV/K or meV/K, once", () => {
    expect(varshniGap(gaasGamma, 0).valueEv).toBe(1.519);
    expect(varshniGap({ eg0Ev: 1.519, alphaEvPerK: 5.405e-4, betaK: 204 }, 300).valueEv).toBeCloseTo(
      varshniGap(gaasGamma, 300).valueEv,
      14,
    );
    expect(varshniAlphaEvPerK({ alphaMevPerK: 0.5405 })).toBeCloseTo(5.405e-4, 16);
    expect(() => varshniAlphaEvPerK({})).toThrow(/once/);
    expect(() => varshniAlphaEvPerK({ alphaEvPerK: 5e-4, alphaMevPerK: 0.5 })).toThrow(/once/);
  });

  it("warns outside the fitted range and not inside it", () => {
    const fitted = { ...gaasGamma, fittedRangeK: { minK: 4, maxK: 400 } };
    expect(varshniGap(fitted, 300)).toMatchObject({ outsideFittedRange: false, warning: null });
    const hot = varshniGap(fitted, 600);
    expect(hot.outsideFittedRange).toBe(true);
    expect(hot.warning).toMatch(/600 K.*4–400 K/);
    expect(varshniGap(gaasGamma, 600).outsideFittedRange).toBe(false);
  });

  it("refuses negative temperatures", () => {
    expect(() => varshniGap(gaasGamma, -1)).toThrow(RangeError);
  });
});

describe("lattice constant against temperature", () => {
  // GaAs [V01] (from memory): a(300 K) = 5.65325 Å, da/dT = 3.88e-5 Å/K.
  const gaas = { a300Angstrom: 5.65325, daDtAngstromPerK: 3.88e-5, fittedRangeK: { minK: 200, maxK: 800 } };

  it("is a(300 K) at 300 K and moves by da/dT per kelvin (calc with [V01])", () => {
    expect(latticeAtTemperature(gaas, 300).valueAngstrom).toBe(5.65325);
    expect(latticeAtTemperature(gaas, 400).valueAngstrom).toBeCloseTo(5.65713, 12);
  });

  it("warns outside the fitted range", () => {
    expect(latticeAtTemperature(gaas, 77)).toMatchObject({ outsideFittedRange: true });
    expect(latticeAtTemperature(gaas, 77).warning).toMatch(/77 K/);
  });
});

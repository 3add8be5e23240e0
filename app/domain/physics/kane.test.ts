import { describe, expect, it } from "vitest";
import { checkKaneMass, kaneInverseMass, kaneMassM0 } from "./kane";
import { expectPrinted } from "./test-support";

// GaAs [V01] (from memory): Ep = 28.8 eV, F = −1.94, Eg = 1.519 eV, Δso = 0.341 eV, m_e(Γ) = 0.067 m0.
const gaas = { epEv: 28.8, f: -1.94, egEv: 1.519, deltaSoEv: 0.341 };

describe("Kane mass [Kane57]", () => {
  it("gives m0/m* = 14.921185 and m* = 0.0670188 m0 for GaAs (calc with [V01])", () => {
    expectPrinted(kaneInverseMass(gaas), "14.921185", "calc");
    expectPrinted(kaneMassM0(gaas), "0.0670188", "calc");
  });

  // 0.067 is printed with two significant digits; [V01] masses pass their own Kane formula to better than 0.2 %.
  it("passes the stated GaAs mass 0.067 m0 at 0.2 % relative tolerance [V01]", () => {
    const check = checkKaneMass({ ...gaas, statedMassM0: 0.067, relativeTolerance: 0.002 });
    expect(check.verdict).toBe("pass");
    expect(Math.abs(check.relativeResidual!)).toBeLessThan(0.002);
  });

  it("warns and fails as the stated mass drifts (default tolerance 2 %)", () => {
    expect(checkKaneMass({ ...gaas, statedMassM0: 0.067 * 1.04 }).verdict).toBe("warn");
    expect(checkKaneMass({ ...gaas, statedMassM0: 0.09 }).verdict).toBe("fail");
    expect(checkKaneMass({ ...gaas, statedMassM0: 0.067 }).relativeTolerance).toBe(0.02);
  });

  it("fails, without a mass, when the parameters give a non-positive m0/m*", () => {
    const broken = { ...gaas, f: -20 };
    expect(() => kaneMassM0(broken)).toThrow(/not a positive mass/);
    expect(checkKaneMass({ ...broken, statedMassM0: 0.067 })).toMatchObject({ massM0: null, verdict: "fail" });
  });
});

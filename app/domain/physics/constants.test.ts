import { describe, expect, it } from "vitest";
import {
  BOLTZMANN_EV_PER_K,
  BOLTZMANN_J_PER_K,
  CODATA_EDITION,
  ELECTRON_MASS_KG,
  ELEMENTARY_CHARGE_C,
  HBAR2_OVER_2ME_EV_A2,
  HBAR_J_S,
  PLANCK_J_S,
} from "./constants";
import { expectPrinted } from "./test-support";

describe("constants [CODATA18]", () => {
  it("names its edition", () => {
    expect(CODATA_EDITION).toBe("CODATA 2018");
  });

  it("holds the exact SI values exactly [CODATA18]", () => {
    expect(PLANCK_J_S).toBe(6.62607015e-34);
    expect(ELEMENTARY_CHARGE_C).toBe(1.602176634e-19);
    expect(BOLTZMANN_J_PER_K).toBe(1.380649e-23);
  });

  it("holds m_e as recommended [CODATA18]", () => {
    expect(ELECTRON_MASS_KG).toBe(9.1093837015e-31);
  });

  // CODATA prints these derived exact values truncated ("1.054 571 817..."), so compare the leading digits.
  it("derives ħ = h/2π and k_B in eV/K with the printed leading digits [CODATA18]", () => {
    expect(Math.trunc(HBAR_J_S * 1e43)).toBe(1054571817);
    expect(Math.trunc(BOLTZMANN_EV_PER_K * 1e14)).toBe(8617333262);
  });

  it("derives ħ²/(2m_e) = 3.80998212 eV·Å² [CODATA18] (calc)", () => {
    expectPrinted(HBAR2_OVER_2ME_EV_A2, "3.80998212", "CODATA18");
  });
});

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
  RYDBERG_EV,
  RYDBERG_PER_M,
  SPEED_OF_LIGHT_M_PER_S,
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

  it("derives the Rydberg energy R∞hc = 13.605693122994 eV from R∞ = 10973731.568160 m⁻¹ [CODATA18]", () => {
    expect(SPEED_OF_LIGHT_M_PER_S).toBe(299792458);
    expect(RYDBERG_PER_M).toBe(10973731.56816);
    expectPrinted(RYDBERG_EV, "13.605693122994", "CODATA18");
  });

  // R∞hc = α² m_e c²/2 with α = 7.2973525693e-3 [CODATA18]: the two routes agree to the 10 digits α carries.
  it("agrees with α² m_e c²/2 [CODATA18]", () => {
    const alpha = 7.2973525693e-3;
    const fromAlpha = (alpha * alpha * ELECTRON_MASS_KG * SPEED_OF_LIGHT_M_PER_S ** 2) / 2 / ELEMENTARY_CHARGE_C;
    expect(Math.abs(fromAlpha / RYDBERG_EV - 1)).toBeLessThan(1e-10);
  });
});

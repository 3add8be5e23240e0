import { all, create } from "mathjs";
import { describe, expect, it } from "vitest";
import { exactDecimal } from "./exact-decimal";
import {
  DIMENSIONLESS, ENERGY_EV, ENERGY_PER_KELVIN_MEV, FORM_FACTOR_EV, LENGTH_ANGSTROM, RYDBERG_IN_EV, LENGTH_PER_KELVIN_ANGSTROM, MASS_M0, convertToCanonical, displayUnit,
  normaliseUnit, type AcceptedUnit,
} from "./units";

// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001): GaAs table values from memory.

// Independent reference: mathjs with BigNumber arithmetic and its own unit definitions (SI prefixes are common practice).
const math = create(all, { number: "BigNumber", precision: 64 });
function referenceConversion(value: string, fromUnit: string, toUnit: string): string {
  return math.unit(math.bignumber(value), fromUnit).toNumeric(toUnit).toString();
}

describe("normaliseUnit", () => {
  it.each([
    ["\u00B5eV/K", "µeV/K"], // micro sign U+00B5
    ["\u03BCeV/K", "µeV/K"], // Greek mu U+03BC
    ["ueV/K", "µeV/K"],
    ["µeV K^-1", "µeV/K"],
    ["meV·K⁻¹", "meV/K"],
    ["meV per K", "meV/K"],
    ["\u212B", "Å"], // angstrom sign U+212B
    ["angstrom", "Å"],
    ["Å/K", "Å/K"],
    ["nm", "nm"],
    ["m₀", "m0"],
    ["m_0", "m0"],
    ["me", "m0"],
    ["", "1"],
    ["dimensionless", "1"],
    [" eV ", "eV"],
  ])("writes %j as %j", (raw, unit) => {
    expect(normaliseUnit(raw)).toBe(unit);
  });

  it("keeps MeV (mega) apart from meV (milli)", () => {
    expect(normaliseUnit("MeV")).toBe("MeV");
    expect(convertToCanonical("1.519", "MeV", ENERGY_EV).ok).toBe(false);
  });
});

type Row = [value: string, unit: string, accepted: AcceptedUnit[], canonical: string, digits: number, mathjs: [string, string] | null, note: string];

describe("convertToCanonical", () => {
  const rows: Row[] = [
    ["5.65325", "Å", LENGTH_ANGSTROM, "5.65325", 6, ["angstrom", "angstrom"], "GaAs a(300 K) [V01] stays as typed"],
    ["0.565325", "nm", LENGTH_ANGSTROM, "5.65325", 6, ["nm", "angstrom"], "GaAs a in nm [V01]"],
    ["565.325", "pm", LENGTH_ANGSTROM, "5.65325", 6, ["pm", "angstrom"], "GaAs a in pm [V01]"],
    ["0.5431020511", "nm", LENGTH_ANGSTROM, "5.431020511", 10, ["nm", "angstrom"], "Si lattice parameter [CODATA18]"],
    ["540.5", "\u00B5eV/K", ENERGY_PER_KELVIN_MEV, "0.5405", 4, ["ueV/K", "meV/K"], "GaAs Varshni α [V01], micro sign"],
    ["540.5", "\u03BCeV/K", ENERGY_PER_KELVIN_MEV, "0.5405", 4, ["ueV/K", "meV/K"], "GaAs Varshni α [V01], Greek mu"],
    ["540.5", "ueV/K", ENERGY_PER_KELVIN_MEV, "0.5405", 4, ["ueV/K", "meV/K"], "GaAs Varshni α [V01], ASCII u"],
    ["0.0005405", "eV/K", ENERGY_PER_KELVIN_MEV, "0.5405", 4, ["eV/K", "meV/K"], "GaAs Varshni α [V01] in eV/K"],
    ["0.5405", "meV/K", ENERGY_PER_KELVIN_MEV, "0.5405", 4, ["meV/K", "meV/K"], "GaAs Varshni α [V01] in the canonical unit"],
    ["1519.0", "meV", ENERGY_EV, "1.5190", 5, ["meV", "eV"], "a stated trailing zero survives meV → eV"],
    ["1.519", "eV", ENERGY_EV, "1.519", 4, ["eV", "eV"], "GaAs Eg(Γ, 0 K) [V01]"],
    ["341", "meV", ENERGY_EV, "0.341", 3, ["meV", "eV"], "GaAs Δso [V01]"],
    ["1519000", "µeV", ENERGY_EV, "1.519000", 7, ["ueV", "eV"], "µeV → eV"],
    ["3.88e-5", "Å/K", LENGTH_PER_KELVIN_ANGSTROM, "0.0000388", 3, ["angstrom/K", "angstrom/K"], "GaAs da/dT [V01]"],
    ["3.88e-6", "nm/K", LENGTH_PER_KELVIN_ANGSTROM, "0.0000388", 3, ["nm/K", "angstrom/K"], "GaAs da/dT [V01] in nm/K"],
    ["0.00388", "pm/K", LENGTH_PER_KELVIN_ANGSTROM, "0.0000388", 3, ["pm/K", "angstrom/K"], "GaAs da/dT [V01] in pm/K"],
    ["0.067", "m0", MASS_M0, "0.067", 2, null, "GaAs m*e(Γ) [V01]"],
    ["0.067", "m₀", MASS_M0, "0.067", 2, null, "GaAs m*e(Γ) [V01], subscript zero"],
    ["6.98", "", DIMENSIONLESS, "6.98", 3, null, "GaAs γ1 [V01]"],
    ["-1.94", "1", DIMENSIONLESS, "-1.94", 3, null, "GaAs F [V01]"],
  ];

  it.each(rows)("%s %s → %s (%i digits)", (value, unit, accepted, canonical, digits, mathjs) => {
    const r = convertToCanonical(value, unit, accepted);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.canonical).toBe(canonical);
    expect(r.value.significantDigits).toBe(digits);
    expect(r.inputValue).toBe(value);
    if (mathjs) expect(exactDecimal(referenceConversion(value, mathjs[0], mathjs[1])).decimal.eq(exactDecimal(canonical).decimal)).toBe(true);
  });

  it("keeps the input as typed and the unit in one spelling", () => {
    const r = convertToCanonical(" 540.5 ", "μeV/K", ENERGY_PER_KELVIN_MEV);
    expect(r).toMatchObject({ ok: true, inputValue: "540.5", inputUnit: "µeV/K", factor: "0.001" });
  });

  it.each([
    ["1.519", "nm", ENERGY_EV, "unit"],
    ["5.65325", "eV", LENGTH_ANGSTROM, "unit"],
    ["5.65325", "", LENGTH_ANGSTROM, "unit"],
    ["0.067", "kg", MASS_M0, "unit"],
    ["1,519", "eV", ENERGY_EV, "value"],
    ["abc", "eV", ENERGY_EV, "value"],
  ] as const)("refuses %j %j at the %s field", (value, unit, accepted, field) => {
    const r = convertToCanonical(value, unit, accepted);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.field).toBe(field);
  });

  it("names the accepted units when a unit is refused", () => {
    const r = convertToCanonical("1", "J", ENERGY_EV);
    expect(r.ok ? "" : r.message).toMatch(/eV, meV, µeV/);
  });
});

describe("form factors in Ry [CODATA18]", () => {
  it("converts Ry to eV exactly with 1 Ry = 13.605693122994 eV, the value CODATA 2018 prints, which the physics derives too", async () => {
    const { RYDBERG_EV } = await import("./physics");
    expect(Math.abs(Number(RYDBERG_IN_EV) - RYDBERG_EV)).toBeLessThan(1e-12);
    const ry = convertToCanonical("-0.21", "Ry", FORM_FACTOR_EV);
    expect(ry.ok && ry.value.canonical).toBe("-2.85719555582874");
    expect(ry.ok && ry.inputUnit).toBe("Ry");
    const mry = convertToCanonical("-210", "mRy", FORM_FACTOR_EV);
    expect(mry.ok && mry.value.decimal.eq(exactDecimal("-2.85719555582874").decimal)).toBe(true);
    const ev = convertToCanonical("-2.857", "eV", FORM_FACTOR_EV);
    expect(ev.ok && ev.value.canonical).toBe("-2.857");
    expect(convertToCanonical("-0.21", "Rydberg", FORM_FACTOR_EV)).toMatchObject({ ok: false, field: "unit" });
  });
});

describe("displayUnit", () => {
  it.each([["m0", "m₀"], ["1", ""], ["meV/K", "meV/K"], ["Å", "Å"]])("shows %s as %j", (unit, shown) => {
    expect(displayUnit(unit)).toBe(shown);
  });
});

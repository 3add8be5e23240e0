import { describe, expect, it } from "vitest";
import { exactDecimal } from "./exact-decimal";
import { RYDBERG_IN_EV } from "./units";
import { QUANTITIES, checkRange, conditionKey, describeTemperature, quantityByKey, quantityRow, validateConditions } from "./quantities";

const q = (key: string) => {
  const found = quantityByKey(key);
  if (!found) throw new Error(`no quantity ${key}`);
  return found;
};

describe("the quantity catalogue", () => {
  it("covers the quantities the registry must keep", () => {
    for (const key of ["eg", "varshni_alpha", "varshni_beta", "me", "luttinger_g1", "luttinger_g2", "luttinger_g3", "lattice_a", "lattice_c", "lattice_dadt", "delta_so", "ep", "kane_f", "vbo", "eg_bowing_c0", "eg_bowing_c1", "potential_un"]) {
      expect(quantityByKey(key), key).toBeDefined();
    }
    expect(q("eg").valleys).toEqual(["G", "X", "L"]);
    expect(new Set(QUANTITIES.map((x) => x.key)).size).toBe(QUANTITIES.length);
  });

  // Exact power-of-ten factors, except Ry and mRy of the form factors: 1 Ry = 13.605693122994 eV as CODATA 2018 prints it.
  it.each(QUANTITIES.map((x) => [x.key, x] as const))("%s: canonical unit accepted at factor 1, exact power-of-ten factors (Ry: R∞hc), min below max", (_key, x) => {
    expect(x.acceptedUnits.find((u) => u.unit === x.canonicalUnit)?.factor).toBe("1");
    for (const u of x.acceptedUnits) {
      if (u.unit === "Ry" || u.unit === "mRy") expect(exactDecimal(u.factor).decimal.eq(exactDecimal(RYDBERG_IN_EV).decimal.times(u.unit === "Ry" ? 1 : 0.001))).toBe(true);
      else expect(u.factor).toMatch(/^(?:1(?:0+)?|0\.0*1)$/);
    }
    expect(exactDecimal(x.rangeMin).decimal.lt(exactDecimal(x.rangeMax).decimal)).toBe(true);
  });

  it("writes the table row's dependency flags from the catalogue's modes", () => {
    expect(quantityRow(q("eg"))).toMatchObject({ dependsOnTemperature: true, dependsOnValley: true, dependsOnComposition: true, canonicalUnit: "eV" });
    expect(quantityRow(q("delta_so"))).toMatchObject({ dependsOnTemperature: false, dependsOnValley: false });
    expect(quantityRow(q("eg_bowing_c0"))).toMatchObject({ dependsOnTemperature: false, dependsOnValley: true, dependsOnComposition: false });
  });
});

describe("the form factors", () => {
  it("are six record quantities V_S(3), V_S(8), V_S(11), V_A(3), V_A(4), V_A(11) in eV, accepting Ry, within ±1 Ry, without temperature, valley or composition", () => {
    const keys = ["ff_vs3", "ff_vs8", "ff_vs11", "ff_va3", "ff_va4", "ff_va11"];
    expect(keys.map((k) => q(k).symbol)).toEqual(["V_S(3)", "V_S(8)", "V_S(11)", "V_A(3)", "V_A(4)", "V_A(11)"]);
    for (const k of keys) {
      expect(q(k)).toMatchObject({ canonicalUnit: "eV", temperature: "independent", valleys: [], composition: "none", rangeMin: "-13.6", rangeMax: "13.6" });
      expect(q(k).storedWith).toBeUndefined();
      expect(q(k).acceptedUnits.map((u) => u.unit)).toEqual(["eV", "meV", "Ry", "mRy"]);
    }
    // Cohen & Bergstresser (1966) give V_S(3) = −0.21 Ry for silicon (from memory): plausible; −0.21 eV typed as Ry by mistake is too.
    expect(checkRange(q("ff_vs3"), "-2.85719555582874")).toBeNull();
    expect(checkRange(q("ff_vs3"), "-21")).toMatch(/outside the plausible range/);
    expect(q("ff_vs3").checkTolerance).toBe("0.15");
    expect(validateConditions(q("ff_va3"), "binary", {}).ok).toBe(true);
    expect(validateConditions(q("ff_va3"), "binary", { temperatureK: "300" }).ok).toBe(false);
  });
});

describe("checkRange", () => {
  it.each([
    ["eg", "1.519", true], // GaAs Eg(Γ, 0 K) [V01]
    ["eg", "3.510", true], // GaN [V01]
    ["eg", "0", true], // the bound itself
    ["eg", "7", true],
    ["eg", "7.0001", false],
    ["eg", "-0.1", false],
    ["eg", "15.19", false], // a slipped decimal point
    ["varshni_alpha", "0.5405", true], // GaAs α in meV/K [V01]
    ["varshni_alpha", "540.5", false], // α left in µeV/K
    ["varshni_beta", "204", true],
    ["me", "0.067", true], // GaAs m*e [V01]
    ["me", "0.67", true],
    ["me", "0", false],
    ["lattice_a", "5.65325", true], // GaAs a [V01]
    ["lattice_a", "0.565325", false], // left in nm
    ["lattice_dadt", "0.0000388", true], // GaAs da/dT [V01]
    ["lattice_dadt", "0.0388", false],
    ["kane_f", "-1.94", true], // GaAs F [V01]
    ["eg_bowing_c0", "-0.127", true], // AlGaAs C0 [V01]
    ["eg_bowing_c1", "1.310", true], // AlGaAs C1 [V01]
    ["potential_un", "0.71125", true],
    ["potential_un", "-12", false],
  ])("%s = %s in range: %s", (key, value, inRange) => {
    expect(checkRange(q(key), value) === null).toBe(inRange);
  });

  it("says which range and unit it checked", () => {
    expect(checkRange(q("lattice_a"), "0.565325")).toBe("0.565325 Å is outside the plausible range of lattice constant a (2 to 8 Å).");
  });
});

describe("record conditions", () => {
  it.each([
    ["eg", "binary", { temperatureK: "300", valley: "G" }, "T=300|V=G|x="],
    ["eg", "binary", { temperatureK: "300.000", valley: "Γ" }, "T=300|V=G|x="],
    ["eg", "binary", { valley: "X" }, "T=fit0|V=X|x="],
    ["eg", "alloy", { valley: "G", composition: "0.30" }, "T=fit0|V=G|x=0.3"],
    ["eg", "alloy", { temperatureK: "300", valley: "G", composition: "0.3" }, "T=300|V=G|x=0.3"],
    ["varshni_alpha", "binary", { valley: "L" }, "T=fit0|V=L|x="],
    ["lattice_a", "element", { temperatureK: "295.65" }, "T=295.65|V=|x="],
    ["delta_so", "binary", {}, "T=|V=|x="],
    ["eg_bowing_c0", "alloy", { valley: "G" }, "T=|V=G|x="],
    ["luttinger_g1", "binary", {}, "T=fit0|V=|x="],
  ] as const)("%s of a %s under %j has the key %s", (key, kind, input, expected) => {
    const r = validateConditions(q(key), kind, input);
    expect(r.ok).toBe(true);
    if (r.ok) expect(conditionKey(q(key), r.conditions)).toBe(expected);
  });

  it.each([
    ["eg", "binary", { temperatureK: "300" }, "valley"],
    ["eg", "binary", { temperatureK: "300", valley: "K" }, "valley"],
    ["eg", "binary", { valley: "G", composition: "0.3" }, "composition"],
    ["eg", "alloy", { valley: "G" }, "composition"],
    ["eg", "alloy", { valley: "G", composition: "1.2" }, "composition"],
    ["eg", "binary", { valley: "G", temperatureK: "-4" }, "temperatureK"],
    ["eg", "binary", { valley: "G", temperatureK: "300.0001" }, "temperatureK"],
    ["varshni_alpha", "binary", { valley: "G", temperatureK: "300" }, "temperatureK"],
    ["lattice_a", "binary", {}, "temperatureK"],
    ["me", "binary", { valley: "X" }, "valley"],
    ["delta_so", "binary", { temperatureK: "300" }, "temperatureK"],
    ["eg_bowing_c0", "binary", { valley: "G" }, "material"],
    ["eg_bowing_c0", "alloy", { valley: "G", composition: "0.3" }, "composition"],
    ["potential_un", "binary", {}, "material"],
  ] as const)("%s of a %s refuses %j at %s", (key, kind, input, field) => {
    const r = validateConditions(q(key), kind, input);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors[field]).toBeTruthy();
  });

  it.each([
    ["eg", "300.000", "300 K"],
    ["eg", null, "0 K fit"],
    ["varshni_beta", null, "0 K fit"],
    ["me", null, "0 K"],
    ["delta_so", null, "T-independent"],
  ] as const)("shows the temperature of %s (%s) as %s", (key, t, shown) => {
    expect(describeTemperature(q(key), t)).toBe(shown);
  });
});

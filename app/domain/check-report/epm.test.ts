import { describe, expect, it, vi } from "vitest";
import { buildCheckReport, type CheckQuantity, type CheckReportInputs, type CheckValue } from ".";
import { checkPseudopotential, formFactorsFromRydberg } from "../physics";
import { QUANTITIES } from "../quantities";
import { FORM_FACTOR_QUANTITIES, LOW_TEMPERATURE_K, lowTemperatureGap, memoizedPseudopotentialCheck } from "./epm";

// [CB66] Cohen & Bergstresser, Phys. Rev. 141, 789 (1966): GaAs and Si form factors (Ry), from memory.
// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001): GaAs Eg(0) at Γ, X, L and a(300 K), from memory.
// [CODATA18] 1 Ry = 13.605693122994 eV.

vi.setConfig({ testTimeout: 60_000 });

const QUANTITY_ROWS: CheckQuantity[] = QUANTITIES.map((q) => ({
  key: q.key, symbol: q.symbol, name: q.name, canonicalUnit: q.canonicalUnit, rangeMin: q.rangeMin, rangeMax: q.rangeMax, checkTolerance: q.checkTolerance ?? null,
}));

let nextId = 1;
function value(quantityKey: string, v: string, unit: string, c: Partial<CheckValue> = {}): CheckValue {
  const id = nextId++;
  return { quantityKey, value: v, unit, valley: null, temperatureK: null, composition: null, recordId: id, revisionId: 1000 + id, sourceLabel: "Cohen & Bergstresser 1966", validFromK: null, validToK: null, ...c };
}

const RY = 13.605693122994;
const ry = (x: number) => String(x * RY);
const GAAS_RY = { S3: -0.23, S8: 0.01, S11: 0.06, A3: 0.07, A4: 0.05, A11: 0.01 } as const;
const formFactorValues = (ff: Record<string, number>) =>
  Object.entries(ff).map(([k, v]) => value(FORM_FACTOR_QUANTITIES[k as keyof typeof FORM_FACTOR_QUANTITIES], ry(v), "eV"));

const gaasFormFactors = formFactorValues(GAAS_RY);
const gaas = {
  egG: value("eg", "1.519", "eV", { valley: "G" }),
  egX: value("eg", "1.981", "eV", { valley: "X" }),
  egL: value("eg", "1.815", "eV", { valley: "L" }),
  eg300: value("eg", "1.4225", "eV", { valley: "G", temperatureK: "300" }),
  a: value("lattice_a", "5.65325", "Å", { temperatureK: "300" }),
};
const gaasValues = [...gaasFormFactors, ...Object.values(gaas)];
const GAAS = { key: "GaAs", name: "Gallium arsenide", kind: "binary" as const, structure: "zinc_blende" as const };

function report(subject: CheckValue, extra: Partial<CheckReportInputs> = {}) {
  return buildCheckReport({ origin: "record", material: GAAS, subject, values: gaasValues, quantities: QUANTITY_ROWS, ...extra });
}
const epm = (r: ReturnType<typeof report>) => r.results.filter((x) => x.kind === "epm");

describe("the pseudopotential check in the report", () => {
  it("checks GaAs's form factors [CB66] against its 0 K gaps at Γ, X and L [V01], with every input linked", () => {
    const r = report(gaasFormFactors[0]);
    const results = epm(r);
    expect(results.map((x) => x.id)).toEqual(["epm:G", "epm:X", "epm:L"]);
    const direct = checkPseudopotential({ structure: "zincblende", latticeAngstrom: 5.65325, formFactorsEv: formFactorsFromRydberg(GAAS_RY), stated: { gamma: 1.519, x: 1.981, l: 1.815 }, toleranceEv: 0.15 });
    for (const [result, point] of [[results[0], "gamma"], [results[1], "x"], [results[2], "l"]] as const) {
      expect(Math.abs(Number(result.computed[0].value) - direct.gaps[point].gapEv)).toBeLessThan(1e-9);
      expect(Number(result.residual!.value)).toBeCloseTo(Number(result.stated!.value) - Number(result.computed[0].value), 9);
      expect(result.status).toBe(direct.gaps[point].verdict);
      expect(result.tolerance).toMatchObject({ label: "absolute", value: "0.150000000000", unit: "eV" });
      expect(result.reference).toMatch(/Cohen & Bergstresser/);
    }
    // The local model sits within the 0.1–0.3 eV the caution names; X is the farthest (common practice for this model).
    for (const result of results) expect(Math.abs(Number(result.residual!.value))).toBeLessThan(0.3);
    expect(results[0].inputs.map((i) => [i.symbol, i.revisionId])).toEqual([
      ["Eg(Γ, 0 K fit)", gaas.egG.revisionId],
      ...gaasFormFactors.map((f) => [QUANTITIES.find((q) => q.key === f.quantityKey)!.symbol, f.revisionId]),
      ["a(300 K)", gaas.a.revisionId],
    ]);
    expect(results[0].inputs[1].from).toBe("subject");
    expect(results[0].epm).toMatchObject({ structure: "zincblende", latticeAngstrom: "5.65325", fundamental: { valley: "Γ" } });
    expect(new URLSearchParams(results[0].epm!.query).get("a3")).toBe(ry(0.07));
    expect(results[0].notes.join(" ")).toMatch(/a = 5\.65325 Å, the lattice constant at 300 K/);
    expect(r.status).toBe("warn");
  });

  it("runs for the lattice constant too, and for a 0 K gap only in its own valley; a 300 K gap does not take part", () => {
    expect(epm(report(gaas.a)).map((x) => x.id)).toEqual(["epm:G", "epm:X", "epm:L"]);
    expect(epm(report(gaas.egX)).map((x) => x.id)).toEqual(["epm:X"]);
    expect(epm(report(gaas.eg300))).toEqual([]);
    // A cold stated gap stands in for a missing 0 K fit: 77 K here.
    const cold = value("eg", "1.5076", "eV", { valley: "G", temperatureK: "77" });
    const values = [...gaasValues.filter((v) => v !== gaas.egG), cold];
    expect(lowTemperatureGap(values, "G")).toBe(cold);
    expect(LOW_TEMPERATURE_K).toBe(80);
    expect(epm(report(cold, { values })).map((x) => x.id)).toEqual(["epm:G"]);
  });

  it("uses the admin's tolerance from the V_S(3) row: 0.05 eV turns GaAs's Γ gap into a warning", () => {
    const quantities = QUANTITY_ROWS.map((q) => (q.key === "ff_vs3" ? { ...q, checkTolerance: "0.05" } : q));
    const [gamma] = epm(report(gaas.egG, { quantities }));
    expect(gamma.tolerance!.value).toBe("0.0500000000000");
    expect(Math.abs(Number(gamma.residual!.value))).toBeGreaterThan(0.05);
    expect(gamma.status).not.toBe("pass");
  });

  it("a typo in a form factor fails: V_S(3) with its sign flipped", () => {
    const flipped = { ...gaasFormFactors[0], value: ry(0.23) };
    const r = report(flipped);
    expect(epm(r).some((x) => x.status === "fail")).toBe(true);
    expect(r.status).toBe("fail");
  });

  it("says what is missing, and stays silent for a material without form factors", () => {
    const noS11 = gaasValues.filter((v) => v.quantityKey !== "ff_vs11");
    const r1 = report(gaasFormFactors[0], { values: noS11 });
    expect(epm(r1)).toEqual([]);
    expect(r1.notRun).toContainEqual({ kind: "epm", reason: "The pseudopotential check of GaAs needs V_S(11) as well." });
    const r2 = report(gaasFormFactors[0], { values: gaasValues.filter((v) => v.quantityKey !== "lattice_a") });
    expect(r2.notRun.find((n) => n.kind === "epm")!.reason).toMatch(/needs the lattice constant a/);
    const r3 = report(gaasFormFactors[0], { values: gaasValues.filter((v) => !(v.quantityKey === "eg" && v.temperatureK === null)) });
    expect(r3.notRun.find((n) => n.kind === "epm")!.reason).toMatch(/No 0 K or low-temperature .* gap of GaAs at Γ, X or L/);
    const plain = report(gaas.a, { values: Object.values(gaas) });
    expect(epm(plain)).toEqual([]);
    expect(plain.notRun.filter((n) => n.kind === "epm")).toEqual([]);
  });

  it("applies to diamond and zinc blende only, and a diamond crystal with an antisymmetric form factor fails", () => {
    const gan = report(gaasFormFactors[0], { material: { key: "GaN", name: "Gallium nitride", kind: "binary", structure: "wurtzite" } });
    expect(gan.notRun.find((n) => n.kind === "epm")!.reason).toMatch(/GaN is not a diamond or zinc-blende crystal/);
    const alloy = report(gaasFormFactors[0], { material: { key: "AlGaAs", name: "AlGaAs", kind: "alloy", structure: "zinc_blende" } });
    expect(alloy.notRun.find((n) => n.kind === "epm")!.reason).toMatch(/AlGaAs is an alloy/);
    // Silicon [CB66] with a stated 0 K gap and, by mistake, a V_A(3).
    const si = { key: "Si", name: "Silicon", kind: "element" as const, structure: "diamond" as const };
    const siValues = [...formFactorValues({ S3: -0.21, S8: 0.04, S11: 0.08 }), value("lattice_a", "5.431020511", "Å", { temperatureK: "295.65" }), value("eg", "3.4", "eV", { valley: "G" })];
    const good = buildCheckReport({ origin: "record", material: si, subject: siValues[0], values: siValues, quantities: QUANTITY_ROWS });
    expect(epm(good).map((x) => [x.id, x.status])).toEqual([["epm:G", "pass"]]);
    expect(epm(good)[0].epm!.fundamental.valley).toBe("Δ");
    const stray = value("ff_va3", ry(0.07), "eV");
    const bad = buildCheckReport({ origin: "record", material: si, subject: stray, values: [...siValues, stray], quantities: QUANTITY_ROWS });
    expect(epm(bad)[0].status).toBe("fail");
    expect(epm(bad)[0].notes[0]).toMatch(/Si is a diamond crystal .* V_A\(3\) cannot be nonzero/);
  });

  it("keeps the last results: the same inputs give the same object without a second solve", () => {
    const input = { structure: "diamond" as const, latticeAngstrom: 5.43, formFactorsEv: formFactorsFromRydberg({ S3: -0.21, S8: 0.04, S11: 0.08 }) };
    const first = memoizedPseudopotentialCheck(input);
    expect(memoizedPseudopotentialCheck({ ...input, formFactorsEv: { ...input.formFactorsEv } })).toBe(first);
    expect(memoizedPseudopotentialCheck({ ...input, latticeAngstrom: 5.431 })).not.toBe(first);
  });
});

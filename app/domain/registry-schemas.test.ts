import { describe, expect, it } from "vitest";
import { quantityByKey } from "./quantities";
import { parseRegistryView, prepareRevision, registryViewSearch, sourceInputSchema } from "./registry-schemas";

// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001): GaAs table values from memory.
const q = (key: string) => quantityByKey(key)!;
const base = { method: "compilation", sourceId: 1 };

describe("prepareRevision", () => {
  it("converts value and uncertainty exactly and keeps the input as typed [V01]", () => {
    const r = prepareRevision(q("varshni_alpha"), { ...base, value: "540.5", unit: "μeV/K", uncertainty: "2.0", validFromK: "0", validToK: "400" });
    expect(r).toEqual({
      ok: true,
      revision: {
        value: "0.5405", valueNumeric: "0.5405", significantDigits: 4, inputValue: "540.5", inputUnit: "µeV/K", uncertainty: "0.0020",
        method: "compilation", sourceId: 1, locator: null, notes: null, potentialCoefficients: null, periodAngstrom: null, validFromK: "0", validToK: "400",
      },
    });
  });

  it("states potential coefficients with a gap, sorted by n, with their period", () => {
    const r = prepareRevision(q("eg"), { ...base, value: "1.4225", unit: "eV", potentialCoefficients: [{ n: 2, value: "0.0250" }, { n: 1, value: "0.71125" }], periodAngstrom: "5.65325" });
    expect(r.ok && r.revision).toMatchObject({ potentialCoefficients: [{ n: 1, valueEv: "0.71125" }, { n: 2, valueEv: "0.0250" }], periodAngstrom: "5.65325" });
  });

  it.each([
    ["eg", { value: "15.19", unit: "eV" }, "value", /plausible range/],
    ["eg", { value: "1.519", unit: "Å" }, "unit", /not accepted/],
    ["eg", { value: "1,519", unit: "eV" }, "value", /decimal separator/],
    ["eg", { value: "1.519", unit: "eV", uncertainty: "-0.01" }, "uncertainty", /not negative/],
    ["eg", { value: "1.519", unit: "eV", potentialCoefficients: [{ n: 1, value: "0.7" }] }, "periodAngstrom", /period/],
    ["eg", { value: "1.519", unit: "eV", periodAngstrom: "5.65325" }, "periodAngstrom", /only with potential coefficients/],
    ["eg", { value: "1.519", unit: "eV", potentialCoefficients: [{ n: 1, value: "0.7" }, { n: 1, value: "0.8" }], periodAngstrom: "5.65" }, "potentialCoefficients.1", /twice/],
    ["eg", { value: "1.519", unit: "eV", potentialCoefficients: [{ n: 1, value: "40" }], periodAngstrom: "5.65" }, "potentialCoefficients.0", /plausible range/],
    ["lattice_a", { value: "5.65325", unit: "Å", potentialCoefficients: [{ n: 1, value: "0.7" }], periodAngstrom: "5.65" }, "potentialCoefficients", /band gap/],
    ["eg", { value: "1.519", unit: "eV", potentialCoefficients: [{ n: 1, value: "0.7" }], periodAngstrom: "0.000001" }, "periodAngstrom", /below 0\.0123 Å .* double precision/],
    ["delta_so", { value: "0.341", unit: "eV", validFromK: "0" }, "validFromK", /no fit range/],
    ["varshni_beta", { value: "204", unit: "K", validFromK: "400", validToK: "4" }, "validToK", /ends below/],
    ["eg", { value: "", unit: "eV" }, "value", /Enter the value/],
  ] as const)("%s refuses %j at %s", (key, input, field, message) => {
    const r = prepareRevision(q(key), { ...base, ...input });
    expect(r.ok).toBe(false);
    if (!r.ok) expect((r.errors as Record<string, string>)[field]).toMatch(message);
  });

  it("needs a method and a source", () => {
    const r = prepareRevision(q("eg"), { value: "1.519", unit: "eV" });
    expect(r.ok ? [] : Object.keys(r.errors).sort()).toEqual(["method", "sourceId"]);
  });
});

describe("the registry view in the URL", () => {
  it("round-trips through its search string, leaving defaults out", () => {
    const v = parseRegistryView(new URLSearchParams("family=arsenides&quantity=eg&q=Vurgaftman&sort=value&dir=desc&page=2&size=25"));
    expect(v).toMatchObject({ family: "arsenides", quantity: "eg", q: "Vurgaftman", sort: "value", dir: "desc", page: 2, size: 25, status: "active" });
    expect(parseRegistryView(new URLSearchParams(registryViewSearch(v).slice(1)))).toEqual(v);
    expect(registryViewSearch(parseRegistryView(new URLSearchParams("")))).toBe("");
    expect(registryViewSearch(v, { page: 1 })).not.toMatch(/page=/);
  });

  it("treats empty form fields as no filter", () => {
    expect(parseRegistryView(new URLSearchParams("family=&material=&quantity=&method=&q=+"))).toMatchObject({ family: undefined, material: undefined, quantity: undefined, method: undefined, q: undefined });
  });
});

describe("sourceInputSchema", () => {
  it("checks a DOI's format and keeps the bare DOI [V01]", () => {
    expect(sourceInputSchema.parse({ kind: "doi", doi: "https://doi.org/10.1063/1.1368156", title: "Band parameters" })).toMatchObject({ doi: "10.1063/1.1368156" });
    expect(sourceInputSchema.safeParse({ kind: "doi", doi: "1063/1.1368156", title: "Band parameters" }).success).toBe(false);
    expect(sourceInputSchema.safeParse({ kind: "report", reportNumber: "KD-EPI-2026-014", title: "PL maps", year: "" }).success).toBe(true);
  });
});

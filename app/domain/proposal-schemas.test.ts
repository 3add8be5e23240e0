import { describe, expect, it } from "vitest";
import { QUANTITIES } from "./quantities";
import {
  conditionsLabel, decisionSchema, emptyPayload, payloadFromFormData, payloadToFormData, readProposalPayload, validateProposal, type ProposalCatalogue,
} from "./proposal-schemas";

// Values: [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), doi:10.1063/1.1368156 (from memory).
const catalogue: ProposalCatalogue = {
  materials: [
    { id: 1, key: "GaAs", name: "Gallium arsenide", formula: "GaAs", kind: "binary", familyId: 10, familyName: "Arsenides" },
    { id: 2, key: "AlGaAs", name: "Aluminium gallium arsenide", formula: "Al(x)Ga(1-x)As", kind: "alloy", familyId: 10, familyName: "Arsenides" },
  ],
  quantities: QUANTITIES,
};

const doiSource = { kind: "doi", doi: "10.1063/1.1368156", title: "Band parameters for III–V compound semiconductors and their alloys", authors: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan", year: "2001" };

function latticeProposal(overrides: Record<string, unknown> = {}) {
  return {
    kind: "new_record", material: "GaAs", quantity: "lattice_a", temperatureMode: "stated", temperatureK: "300",
    value: "0.565325", unit: "nm", method: "compilation", source: doiSource, locator: "GaAs table", ...overrides,
  };
}

describe("the proposal schema", () => {
  it("converts the value typed with its unit exactly to the canonical unit ([V01] GaAs a = 5.65325 Å at 300 K)", () => {
    const r = validateProposal(latticeProposal(), catalogue);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.proposal.prepared?.value).toBe("5.65325");
    expect(r.proposal.prepared?.inputUnit).toBe("nm");
    expect(r.proposal.prepared?.significantDigits).toBe(6);
    expect(r.proposal.conditionKey).toBe("T=300|V=|x=");
    expect(r.proposal.source).toMatchObject({ kind: "doi", doi: "10.1063/1.1368156" });
  });

  it("keeps a 0 K fit parameter apart from a stated temperature ([V01] GaAs Eg(Γ, 0 K) = 1.519 eV typed as 1519 meV)", () => {
    const r = validateProposal({ ...latticeProposal(), quantity: "eg", temperatureMode: "fit0", temperatureK: "", valley: "Γ", value: "1519", unit: "meV" }, catalogue);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.proposal.prepared?.value).toBe("1.519");
    expect(r.proposal.conditionKey).toBe("T=fit0|V=G|x=");
  });

  it("puts each message at the field that is wrong", () => {
    const r = validateProposal(latticeProposal({ value: "5,65", unit: "furlong", locator: "", source: { ...doiSource, doi: "not-a-doi" } }), catalogue);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.errors.unit).toMatch(/not accepted here; use Å, nm, pm/);
    expect(r.errors.locator).toMatch(/page, table or figure/);
    expect(r.errors["source.doi"]).toMatch(/A DOI starts with 10\./);
    const comma = validateProposal(latticeProposal({ value: "0,565325" }), catalogue);
    expect(comma.ok).toBe(false);
    if (!comma.ok) expect(comma.errors.value).toBe("Use a point as the decimal separator, without thousands separators.");
  });

  it("requires a source and a temperature where the quantity is stated at one", () => {
    const r = validateProposal(latticeProposal({ temperatureK: "", source: { kind: "doi", doi: "", title: "" } }), catalogue);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.errors.temperatureK).toMatch(/stated at a temperature/);
    expect(r.errors["source.doi"]).toMatch(/needs its source/);
  });

  it("names an unknown material or quantity", () => {
    const r = validateProposal(latticeProposal({ material: "Unobtainium", quantity: "colour" }), catalogue);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.errors.material).toBe("“Unobtainium” is not a material in the ledger.");
    expect(r.errors.quantity).toBe("“colour” is not a quantity in the catalogue.");
  });

  it("refuses a value outside the quantity's plausible range", () => {
    const r = validateProposal(latticeProposal({ value: "56.5325", unit: "nm" }), catalogue);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors.value).toMatch(/outside the plausible range/);
  });

  it("takes potential coefficients with their period for a gap, and refuses them without one", () => {
    const gap = { ...latticeProposal(), quantity: "eg", valley: "G", value: "1.4225", unit: "eV", potentialCoefficients: [{ n: "1", valueEv: "0.1" }] };
    const missing = validateProposal(gap, catalogue);
    expect(missing.ok).toBe(false);
    if (!missing.ok) expect(missing.errors.periodAngstrom).toMatch(/State the period a/);
    const stated = validateProposal({ ...gap, periodAngstrom: "5.65325" }, catalogue);
    expect(stated.ok).toBe(true);
    if (stated.ok) expect(stated.proposal.prepared?.potentialCoefficients).toEqual([{ n: 1, valueEv: "0.1" }]);
  });

  it("states the composition of an alloy record and keeps a negative bowing parameter ([V01] Al(x)Ga(1-x)As C0 = −0.127 eV)", () => {
    const r = validateProposal({ ...latticeProposal(), material: "AlGaAs", quantity: "eg_bowing_c0", temperatureK: "", valley: "G", value: "−0.127", unit: "eV" }, catalogue);
    expect(r.ok).toBe(true);
    if (r.ok) expect(r.proposal.prepared?.value).toBe("-0.127");
    const noX = validateProposal({ ...latticeProposal(), material: "AlGaAs" }, catalogue);
    expect(noX.ok).toBe(false);
    if (!noX.ok) expect(noX.errors.composition).toMatch(/states its composition/);
  });

  it("asks a retirement for its reason and its record, not for a value", () => {
    const r = validateProposal({ kind: "retirement", material: "GaAs", quantity: "lattice_a", recordId: "", reason: "" }, catalogue);
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(Object.keys(r.errors).sort()).toEqual(["reason", "recordId"]);
    const ok = validateProposal({ kind: "retirement", material: "GaAs", quantity: "lattice_a", recordId: "7", reason: "Duplicate of the 295 K record." }, catalogue);
    expect(ok.ok).toBe(true);
  });

  it("keeps everything typed in a draft, however wrong, and reads it back from a form", () => {
    const typed = latticeProposal({ value: "not yet", unit: "??", potentialCoefficients: [{ n: "2", valueEv: "0.05" }] });
    const payload = readProposalPayload(typed);
    const round = payloadFromFormData(payloadToFormData(payload));
    expect(round).toEqual(payload);
    expect(round.value).toBe("not yet");
    expect(round.source.doi).toBe("10.1063/1.1368156");
    expect(readProposalPayload({ kind: "nonsense", value: 12 })).toMatchObject({ kind: "new_record", value: "12" });
    expect(emptyPayload("revision").kind).toBe("revision");
  });
});

describe("the decision schema", () => {
  it("requires a reason to reject, not to approve", () => {
    expect(decisionSchema.safeParse({ decision: "reject", version: "1", reason: "  " }).success).toBe(false);
    expect(decisionSchema.safeParse({ decision: "reject", version: "1", reason: "Wrong temperature." }).success).toBe(true);
    expect(decisionSchema.safeParse({ decision: "approve", version: "3" }).success).toBe(true);
    expect(decisionSchema.safeParse({ decision: "approve" }).success).toBe(false);
  });
});

describe("conditionsLabel", () => {
  it("reads conditions as the pages show them, and a draft's unfinished ones as typed", () => {
    expect(conditionsLabel("eg", { temperatureK: "300.000", valley: "G", composition: null })).toBe("Γ, 300 K");
    expect(conditionsLabel("eg", { temperatureK: null, valley: "X", composition: "0.30000" })).toBe("x = 0.3, X, 0 K fit");
    expect(conditionsLabel("delta_so", { temperatureK: null, valley: null, composition: null })).toBe("T-independent");
    expect(conditionsLabel("lattice_a", { temperatureK: "3OO", valley: null, composition: null })).toBe("3OO K");
  });
});

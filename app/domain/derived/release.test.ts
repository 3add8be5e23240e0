import { describe, expect, it } from "vitest";
import { expectPrinted } from "../physics/test-support";
import {
  endMemberFormulas, evaluateRelease, evaluationCsvText, evaluationFileName, evaluationJsonText, parseEvaluationQuery, type EvaluationQuery,
} from "./release";
import { v01Release } from "./test-support";

// A release evaluated at the pipeline's conditions. Inputs: the [V01] values (Vurgaftman, Meyer, Ram-Mohan, J. Appl.
// Phys. 89, 5815 (2001), table values from memory) as pinned items; expected values computed by hand with the
// formula named beside each (Varshni 1967 [Var67]; quadratic bowing [V01]; Vegard 1921 [Vegard21]; Kane 1957 [Kane57]).

const SHA = "ab".repeat(32);

function query(raw: Record<string, string>): EvaluationQuery {
  const parsed = parseEvaluationQuery(raw);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
  return parsed.query;
}

function run(raw: Record<string, string>, content = v01Release()) {
  const r = evaluateRelease(content, SHA, query(raw), "0.1.0");
  if (!r.ok) throw new Error(r.message);
  return r.evaluation;
}

const valueOf = (raw: Record<string, string>, id: string, material?: string) => {
  const e = run(raw);
  const m = material ? e.materials.find((x) => x.key === material)! : e.materials[0];
  return m.values.find((v) => v.id === id);
};

describe("evaluating a release", () => {
  it("GaAs Eg(Γ): 1.4224821 eV at 300 K and 1.507596 eV at 77 K from the 0 K fit [Var67, V01 calc]", () => {
    expectPrinted(Number(valueOf({ temperature: "300", material: "GaAs" }, "eg-G")!.value), "1.4224821", "calc");
    expectPrinted(Number(valueOf({ temperature: "77", material: "GaAs" }, "eg-G")!.value), "1.507596", "calc");
    const gamma = valueOf({ temperature: "300", material: "GaAs" }, "eg-G")!;
    expect(gamma.formula).toBe("Eg(T) = Eg(0) − αT²/(T + β)");
    expect(gamma.inputs.map((i) => [i.symbol, i.value, i.revisionId !== null])).toEqual([["Eg(Γ, 0 K)", "1.519", true], ["α(Γ)", "0.5405", true], ["β(Γ)", "204", true]]);
  });

  it("GaAs a(77 K) = 5.65325 + (77 − 300)·3.88e-5 Å and the Kane mass with Eg(Γ, 0 K) = 0.0670188 m0 [V01, Kane57 calc]", () => {
    expect(Number(valueOf({ temperature: "77", material: "GaAs" }, "lattice-a")!.value)).toBeCloseTo(5.65325 - 223 * 3.88e-5, 12);
    expectPrinted(Number(valueOf({ temperature: "0", material: "GaAs" }, "kane-me")!.value), "0.0670188", "calc");
    // At 77 K the gap is Varshni's 1.507596 eV: m0/m* = 1 + 2F + Ep(Eg + 2Δ/3)/(Eg(Eg + Δ)) by hand.
    const eg = 1.519 - (0.5405e-3 * 77 ** 2) / (77 + 204);
    const hand = 1 / (1 - 3.88 + (28.8 * (eg + (2 * 0.341) / 3)) / (eg * (eg + 0.341)));
    expect(Number(valueOf({ temperature: "77", material: "GaAs" }, "kane-me")!.value)).toBeCloseTo(hand, 11);
  });

  it("Al(0.3)Ga(0.7)As Γ at 300 K: end points by Varshni, then C = −0.127 + 1.310x [V01 calc], beside the stated 1.838 ± 0.003 eV", () => {
    const gamma = valueOf({ temperature: "300", material: "AlGaAs", x: "0.3" }, "eg-G")!;
    const egAlAs = 3.099 - (0.885e-3 * 300 ** 2) / (300 + 530);
    const egGaAs = 1.519 - (0.5405e-3 * 300 ** 2) / (300 + 204);
    expect(Number(gamma.value)).toBeCloseTo(0.3 * egAlAs + 0.7 * egGaAs - 0.3 * 0.7 * (-0.127 + 1.31 * 0.3), 11);
    expectPrinted(Number(gamma.value), "1.84079", "calc");
    expect(gamma.stated).toMatchObject({ value: "1.838", uncertainty: "0.003" });
    const cold = valueOf({ temperature: "77", material: "AlGaAs", x: "0.3" }, "eg-G")!;
    const a77 = 3.099 - (0.885e-3 * 77 ** 2) / (77 + 530);
    const b77 = 1.519 - (0.5405e-3 * 77 ** 2) / (77 + 204);
    expect(Number(cold.value)).toBeCloseTo(0.3 * a77 + 0.7 * b77 - 0.21 * (-0.127 + 0.393), 11);
    // Vegard at 300 K [Vegard21]: 5.655605 Å (check value, calc).
    expectPrinted(Number(valueOf({ temperature: "300", material: "AlGaAs", x: "0.3" }, "lattice-a")!.value), "5.655605", "calc");
  });

  it("In(x)Ga(1−x)As on InP: the lattice match x = 0.534 (the familiar In0.53Ga0.47As) and a mismatch of zero there [V01, Vegard21 calc]", () => {
    const e = run({ temperature: "300", material: "InGaAs", x: "0.5344", substrate: "InP" });
    const m = e.materials[0];
    const x = m.values.find((v) => v.id === "lattice-match-x")!;
    expect(Number(x.value)).toBeCloseTo((5.8697 - 5.65325) / (6.0583 - 5.65325), 12);
    expect(Number(x.value)).toBeCloseTo(0.53, 2);
    expect(Math.abs(Number(m.values.find((v) => v.id === "mismatch")!.value))).toBeLessThan(0.001);
    // GaAs has a Varshni fit at X, InAs has none: Eg(X) of the alloy is named as missing, not guessed.
    expect(m.missing.join(" ")).toMatch(/Eg\(X\): InAs has no 0 K Varshni fit at X in V01 test set release 1/);
  });

  it("names a missing bowing parameter, and interpolates linearly only when asked", () => {
    const named = run({ temperature: "300", material: "AlGaAs", x: "0.3" }).materials[0];
    expect(named.values.map((v) => v.id)).not.toContain("eg-X");
    expect(named.missing.join(" ")).toMatch(/Eg\(X\): no bowing parameter of AlGaAs at X in V01 test set release 1 \(ask for linear interpolation/);
    const linear = run({ temperature: "300", material: "AlGaAs", x: "0.3", missingBowing: "linear" }).materials[0];
    const egX = linear.values.find((v) => v.id === "eg-X")!;
    const hand = 0.3 * (2.24 - (0.7e-3 * 9e4) / 830) + 0.7 * (1.981 - (0.46e-3 * 9e4) / 504);
    expect(Number(egX.value)).toBeCloseTo(hand, 11);
    expect(egX.warnings.join(" ")).toMatch(/interpolated linearly \(C = 0\)/);
  });

  it("without a material: every material of the release, an alloy without x named as such", () => {
    const e = run({ temperature: "77" });
    expect(e.materials.map((m) => m.key)).toEqual(["GaAs", "AlAs", "InAs", "InP", "AlGaAs", "InGaAs"]);
    expect(e.materials.find((m) => m.key === "AlGaAs")!.missing).toEqual(["AlGaAs: an alloy needs a composition; give x (the fraction of AlAs) to evaluate it."]);
    expect(e.release).toEqual({ set: "v01-test", setName: "V01 test set", number: 1, sha256: SHA, codataEdition: "CODATA 2018", softwareVersion: "0.1.0" });
    expect(e.evaluatedWith).toMatchObject({ bandledgerVersion: "0.1.0", codataEdition: "CODATA 2018" });
  });

  it("refuses conditions that do not fit the release, naming the field", () => {
    const refuse = (raw: Record<string, string>) => {
      const r = evaluateRelease(v01Release(), SHA, query(raw), "0.1.0");
      return r.ok ? null : [r.field, r.message];
    };
    expect(refuse({ temperature: "77", material: "GaSb" })).toEqual(["material", expect.stringMatching(/^material: GaSb is not in V01 test set release 1, which holds GaAs, AlAs/)]);
    expect(refuse({ temperature: "77", material: "AlGaAs" })).toEqual(["x", expect.stringMatching(/AlGaAs is an alloy; give its composition x from 0 to 1 \(the fraction of AlAs\)/)]);
    expect(refuse({ temperature: "77", material: "GaAs", x: "0.3" })).toEqual(["x", "x: GaAs is not an alloy, so it takes no composition."]);
    expect(refuse({ temperature: "77", substrate: "AlGaAs" })?.[0]).toBe("substrate");
    expect(parseEvaluationQuery({ temperature: "-4" })).toEqual({ ok: false, errors: { temperature: "temperature: choose a temperature from 0 to 2000 K." } });
    expect(parseEvaluationQuery({ temperature: "hot" })).toEqual({ ok: false, errors: { temperature: "temperature: “hot” is not a decimal number." } });
    expect(parseEvaluationQuery({})).toMatchObject({ ok: false, errors: { temperature: expect.stringMatching(/give the temperature/) } });
    expect(parseEvaluationQuery({ temperature: "77", x: "1.2" })).toEqual({ ok: false, errors: { x: "x: the composition x lies between 0 and 1." } });
    expect(parseEvaluationQuery({ temperature: "77", missingBowing: "cubic" })).toMatchObject({ ok: false, errors: { missingBowing: expect.any(String) } });
  });

  it("same inputs, same bytes: JSON and CSV name the release hash at the top", () => {
    const raw = { temperature: "77", material: "AlGaAs", x: "0.3", substrate: "GaAs" };
    const a = run(raw);
    const b = run(raw);
    expect(evaluationJsonText(a)).toBe(evaluationJsonText(b));
    expect(evaluationCsvText(a)).toBe(evaluationCsvText(b));
    expect(evaluationJsonText(a).split("\n").slice(0, 6).join("\n")).toContain(`"sha256": "${SHA}"`);
    const csv = evaluationCsvText(a).split("\r\n");
    expect(csv[0]).toBe('# schema: "bandledger.evaluation"');
    expect(csv[1]).toBe(`# release_sha256: "${SHA}"`);
    expect(csv.find((l) => l.startsWith("AlGaAs,0.3,GaAs,eg-G,"))).toMatch(/,eV,not stated,not-stated,/);
    expect(evaluationFileName(a, "csv")).toBe("v01-test-r1-77K-AlGaAs-x0.3-on-GaAs.csv");
  });

  it("reads an alloy's end members from its formula", () => {
    expect(endMemberFormulas("Al(x)Ga(1-x)As")).toEqual({ a: "AlAs", b: "GaAs" });
    expect(endMemberFormulas("In(x)Ga(1-x)As")).toEqual({ a: "InAs", b: "GaAs" });
    expect(endMemberFormulas("GaAs(x)Sb(1-x)")).toEqual({ a: "GaAs", b: "GaSb" });
    expect(endMemberFormulas("GaAs")).toBeNull();
    expect(endMemberFormulas("Al(x)Ga(y)In(1-x-y)As")).toBeNull();
  });
});

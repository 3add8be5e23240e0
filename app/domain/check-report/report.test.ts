import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { buildCheckReport, worstVerdict } from "./report";
import { GAAS, gaas, gaasValues, QUANTITY_ROWS, report, result, value } from "./test-fixtures";

// The report as a whole, and every check outside its domain: [Var67] T + β > 0, [Kane57] Eg + Δso > 0, [V01] x in [0, 1].

describe("the report as a whole", () => {
  it("lets a proposal's value replace the record it would change", () => {
    const proposed = { ...gaas.eg300, value: "1.30", revisionId: null };
    const r = buildCheckReport({ origin: "proposal", material: GAAS, subject: proposed, values: gaasValues, quantities: QUANTITY_ROWS });
    expect(result(r, "varshni")!.status).toBe("fail");
    expect(result(r, "varshni")!.inputs.at(-1)).toMatchObject({ value: "1.30", from: "subject" });
  });

  it("has status none and no results for a value it cannot read (a retirement, an empty field)", () => {
    const r = report({ ...gaas.eg300, value: null });
    expect(r).toMatchObject({ status: "none", results: [] });
  });

  it("takes the worst verdict", () => {
    expect(worstVerdict([])).toBe("none");
    expect(worstVerdict(["pass", "none"])).toBe("pass");
    expect(worstVerdict(["pass", "warn", "pass"])).toBe("warn");
    expect(worstVerdict(["warn", "fail", "pass"])).toBe("fail");
  });

  it("labels the subject with its material, quantity and conditions", () => {
    expect(report(gaas.eg300).subject.label).toBe("GaAs · Band gap (Γ, 300 K)");
    expect(report(gaas.alpha).subject.label).toBe("GaAs · Varshni α (Γ)");
  });
});

// Out of the physics' domain: T + β ≤ 0 [Var67], x outside [0, 1], Eg + Δso ≤ 0 [Kane57], a period too small for
// double precision, values that are not numbers. Each check reports these as its own failure with the reason.
describe("every check reports out-of-domain inputs as a failed check, never an exception", () => {
  const fitWith = (beta: string) => [gaas.eg0, gaas.alpha, { ...gaas.beta, value: beta }];
  const reasons = (r: ReturnType<typeof report>, kind: string) =>
    r.results.filter((x) => x.kind === kind).map((x) => [x.status, x.notes.join(" ")]);

  it("Varshni: a 0 K fit with β = −400 K and a gap stated at 300 K (T + β must be positive)", () => {
    const r = report(gaas.eg300, { values: [...fitWith("-400"), gaas.eg300] });
    expect(reasons(r, "varshni")).toEqual([["fail", expect.stringMatching(/could not run on these inputs: T \+ β must be positive/)]]);
    expect(r.status).toBe("fail");
    // The same fit checked against every stated gap: each temperature gets its own result.
    const at500 = value("eg", "1.3", "eV", { valley: "G", temperatureK: "500" });
    const fromFit = report({ ...gaas.beta, value: "-400" }, { values: [gaas.eg0, gaas.alpha, gaas.eg300, at500] });
    expect(fromFit.results.filter((x) => x.kind === "varshni").map((x) => x.status)).toEqual(["fail", expect.stringMatching(/pass|warn|fail/)]);
    expect(fromFit.results.find((x) => x.id === "varshni:G:300")!.notes.join(" ")).toMatch(/T \+ β/);
    expect(fromFit.results.find((x) => x.id === "varshni:G:500")!.computed).toHaveLength(1);
  });

  it("bowing: an end member's β = −600 K at 300 K, and a composition x = 1.5", () => {
    const alas = [
      value("eg", "3.099", "eV", { valley: "G" }),
      value("varshni_alpha", "0.885", "meV/K", { valley: "G" }),
      value("varshni_beta", "-600", "K", { valley: "G" }),
    ];
    const c0 = value("eg_bowing_c0", "-0.127", "eV", { valley: "G" });
    const algaas = { key: "AlGaAs", name: "Aluminium gallium arsenide", kind: "alloy" as const };
    const endMembers = { a: { material: { key: "AlAs", name: "Aluminium arsenide", kind: "binary" as const }, values: alas }, b: { material: GAAS, values: gaasValues } };
    const gap = (x: string) => value("eg", "1.838", "eV", { valley: "G", temperatureK: "300", composition: x });
    const run = (x: string) => buildCheckReport({ origin: "proposal", material: algaas, subject: gap(x), values: [c0], quantities: QUANTITY_ROWS, endMembers });
    expect(reasons(run("0.3"), "bowing")).toEqual([["fail", expect.stringMatching(/T \+ β must be positive/)]]);
    const goodEnds = { ...endMembers, a: { ...endMembers.a, values: alas.map((v) => (v.quantityKey === "varshni_beta" ? { ...v, value: "530" } : v)) } };
    const outside = buildCheckReport({ origin: "proposal", material: algaas, subject: gap("1.5"), values: [c0], quantities: QUANTITY_ROWS, endMembers: goodEnds });
    expect(reasons(outside, "bowing")).toEqual([["fail", expect.stringMatching(/composition x must lie between 0 and 1/)]]);
  });

  it("Kane: Eg + Δso ≤ 0, and the NFE check: a period too small for double precision", () => {
    const kane = report(gaas.me, { values: gaasValues.map((v) => (v === gaas.delta ? { ...v, value: "-2" } : v)) });
    expect(reasons(kane, "kane")).toEqual([["fail", expect.stringMatching(/Eg \+ Δso must be positive/)]]);
    const tiny = value("eg", "1", "eV", { valley: "G", temperatureK: "300", potentialCoefficients: [{ n: 1, valueEv: "0.5" }], periodAngstrom: "0.000001" });
    expect(reasons(report(tiny, { values: [] }), "nfe")).toEqual([["fail", expect.stringMatching(/period .* too small/)]]);
  });

  it("range: a value that is not a number is a failed range check, not an exception", () => {
    const r = report({ ...gaas.eg300, value: "1,42" });
    expect(reasons(r, "range")).toEqual([["fail", expect.stringMatching(/could not run/)]]);
  });

  function expectReport(r: ReturnType<typeof report>) {
    expect(["pass", "warn", "fail", "none"]).toContain(r.status);
    for (const x of r.results) {
      expect(["pass", "warn", "fail"]).toContain(x.status);
      if (x.notes.some((n) => /could not run/.test(n))) expect(x.status).toBe("fail");
    }
  }

  // Every quantity a check reads, each replaced in turn by an out-of-domain value, under every check's subject.
  const strange = ["-400", "0", "-1", "1.5", "1e400", "-1e400", "abc", "1,5", " ", "NaN", "Infinity", "-0"];
  it("walks every check with out-of-domain values in every input: a report every time", () => {
    const subjects = [gaas.eg0, gaas.alpha, gaas.beta, gaas.eg300, gaas.me, gaas.ep, gaas.f, gaas.delta];
    fc.assert(
      fc.property(
        fc.constantFrom(...subjects.keys()),
        fc.array(fc.tuple(fc.constantFrom(...gaasValues.keys()), fc.constantFrom("value", "temperatureK", "validFromK", "validToK"), fc.constantFrom(...strange)), { minLength: 1, maxLength: 4 }),
        (subjectIndex, changes) => {
          const values = gaasValues.map((v) => ({ ...v }));
          for (const [i, field, text] of changes) (values[i] as Record<string, unknown>)[field] = field === "temperatureK" && values[i].temperatureK === null ? null : text;
          const subject = values[gaasValues.indexOf(subjects[subjectIndex])];
          const r = report(subject, { values });
          expectReport(r);
        },
      ),
      { numRuns: 300 },
    );
  });

  it("walks the NFE and bowing checks likewise: periods, coefficients, compositions and end members", () => {
    const nfeGap = value("eg", "0.2", "eV", { valley: "G", temperatureK: "300", potentialCoefficients: [{ n: 1, valueEv: "0.1" }], periodAngstrom: "5.65325" });
    const alas = [
      value("eg", "3.099", "eV", { valley: "G" }),
      value("varshni_alpha", "0.885", "meV/K", { valley: "G" }),
      value("varshni_beta", "530", "K", { valley: "G" }),
    ];
    const c0 = value("eg_bowing_c0", "-0.127", "eV", { valley: "G" });
    const algaas = { key: "AlGaAs", name: "Aluminium gallium arsenide", kind: "alloy" as const };
    fc.assert(
      fc.property(fc.constantFrom(...strange), fc.constantFrom(...strange), fc.constantFrom(...strange), fc.integer({ min: 0, max: 3 }), (a, b, c, which) => {
        const gap = { ...nfeGap, periodAngstrom: which === 0 ? a : nfeGap.periodAngstrom, potentialCoefficients: [{ n: 1, valueEv: which === 1 ? a : "0.1" }], value: which === 2 ? a : "0.2" };
        expectReport(report(gap, { values: [] }));
        const ends = alas.map((v, i) => (i === which % 3 ? { ...v, value: b } : v));
        const alloyGap = value("eg", which === 3 ? a : "1.838", "eV", { valley: "G", temperatureK: which === 2 ? b : "300", composition: c });
        const endMembers = { a: { material: { key: "AlAs", name: "Aluminium arsenide", kind: "binary" as const }, values: ends }, b: { material: GAAS, values: gaasValues } };
        expectReport(buildCheckReport({ origin: "proposal", material: algaas, subject: alloyGap, values: [{ ...c0, value: which === 1 ? b : c0.value }], quantities: QUANTITY_ROWS, endMembers }));
      }),
      { numRuns: 300 },
    );
  });
});

import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { buildCheckReport, worstVerdict, type CheckQuantity, type CheckReportInputs, type CheckValue } from "./check-report";
import { QUANTITIES } from "./quantities";

// Sources of the values below (full references in /work/shared/reference/check-values.md):
//   [V01]    Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001) — table values from memory.
//   [Kane57] Kane, J. Phys. Chem. Solids 1, 249 (1957).   [Var67] Varshni, Physica 34, 149 (1967).
//   [Kittel] Kittel, Introduction to Solid State Physics, 8th ed., ch. 7 (two-band gap 2|U_G|, the U0·cos trap).
//   calc: computed from the listed inputs with the formula named (worked examples of check-values.md).

const QUANTITY_ROWS: CheckQuantity[] = QUANTITIES.map((q) => ({
  key: q.key, symbol: q.symbol, name: q.name, canonicalUnit: q.canonicalUnit, rangeMin: q.rangeMin, rangeMax: q.rangeMax, checkTolerance: q.checkTolerance ?? null,
}));

let nextId = 1;
function value(quantityKey: string, v: string, unit: string, c: Partial<CheckValue> = {}): CheckValue {
  const id = nextId++;
  return {
    quantityKey, value: v, unit, valley: null, temperatureK: null, composition: null, recordId: id, revisionId: 1000 + id, sourceLabel: "Vurgaftman et al. 2001",
    validFromK: null, validToK: null, ...c,
  };
}

// GaAs [V01], from memory.
const gaas = {
  eg0: value("eg", "1.519", "eV", { valley: "G", validFromK: "0", validToK: "400" }),
  alpha: value("varshni_alpha", "0.5405", "meV/K", { valley: "G" }),
  beta: value("varshni_beta", "204", "K", { valley: "G" }),
  eg300: value("eg", "1.4225", "eV", { valley: "G", temperatureK: "300.000" }),
  me: value("me", "0.067", "m0", { valley: "G" }),
  ep: value("ep", "28.8", "eV"),
  f: value("kane_f", "-1.94", "1"),
  delta: value("delta_so", "0.341", "eV"),
  a: value("lattice_a", "5.65325", "Å", { temperatureK: "300" }),
};
const gaasValues = Object.values(gaas);
const GAAS = { key: "GaAs", name: "Gallium arsenide", kind: "binary" as const };

function report(subject: CheckValue, extra: Partial<CheckReportInputs> = {}) {
  return buildCheckReport({ origin: "record", material: GAAS, subject, values: gaasValues, quantities: QUANTITY_ROWS, ...extra });
}

const result = (r: ReturnType<typeof report>, kind: string) => r.results.find((x) => x.kind === kind);

describe("Kane check [Kane57] with the GaAs set of [V01]", () => {
  it("passes the stated 0.067 m0 against the Kane mass 0.0670188 m0 (calc), naming every input with its revision", () => {
    const r = report(gaas.me);
    const kane = result(r, "kane")!;
    expect(kane.status).toBe("pass");
    expect(Number(kane.computed[0].value)).toBeCloseTo(0.0670188, 7);
    expect(Math.abs(Number(kane.residual!.value))).toBeLessThan(0.002);
    expect(kane.tolerance).toMatchObject({ label: "relative", value: "0.0200000000000" });
    expect(kane.formula).toBe("m0/m* = 1 + 2F + Ep(Eg + 2Δso/3)/(Eg(Eg + Δso))");
    expect(kane.codataEdition).toBe("CODATA 2018");
    expect(kane.inputs.map((i) => [i.symbol, i.value, i.revisionId, i.from])).toEqual([
      ["Ep", "28.8", gaas.ep.revisionId, "registry"],
      ["F", "-1.94", gaas.f.revisionId, "registry"],
      ["Eg(Γ, 0 K fit)", "1.519", gaas.eg0.revisionId, "registry"],
      ["Δso", "0.341", gaas.delta.revisionId, "registry"],
      ["m*e(Γ, 0 K fit)", "0.067", gaas.me.revisionId, "subject"],
    ]);
    expect(r.status).toBe("pass");
  });

  it("fails a mass typed a factor ten off (0.67 m0), and runs for Ep, F, Δso and Eg(0) too", () => {
    const wrong = { ...gaas.me, value: "0.67" };
    expect(result(report(wrong), "kane")!.status).toBe("fail");
    for (const part of [gaas.ep, gaas.f, gaas.delta, gaas.eg0]) expect(result(report(part), "kane")?.status).toBe("pass");
    // The 300 K gap is not the gap of a 0 K mass: no Kane result for it.
    expect(result(report(gaas.eg300), "kane")).toBeUndefined();
  });

  it("uses an admin's tolerance: 0.1 % relative turns a 0.0670188 vs 0.0672 mismatch into a warn", () => {
    const quantities = QUANTITY_ROWS.map((q) => (q.key === "me" ? { ...q, checkTolerance: "0.001" } : q));
    const r = report({ ...gaas.me, value: "0.0672" }, { quantities });
    expect(result(r, "kane")!.status).toBe("warn");
  });

  it("says what is missing when the set is incomplete", () => {
    const r = report(gaas.me, { values: gaasValues.filter((v) => v.quantityKey !== "ep") });
    expect(result(r, "kane")).toBeUndefined();
    expect(r.notRun).toContainEqual({ kind: "kane", reason: "The Kane check needs Ep of GaAs as well." });
  });
});

describe("nearly-free-electron check [Kittel] with period 5.65325 Å", () => {
  const gap = (stated: string, u: string, c: Partial<CheckValue> = {}) =>
    value("eg", stated, "eV", { valley: "G", temperatureK: "300", potentialCoefficients: [{ n: 1, valueEv: u }], periodAngstrom: "5.65325", ...c });

  it("passes a stated gap of 2|U| = 0.2 eV for U_1 = 0.1 eV, beside first order and central equation", () => {
    const r = report(gap("0.2", "0.1"), { values: [] });
    const nfe = result(r, "nfe")!;
    expect(nfe.status).toBe("pass");
    expect(Number(nfe.nfe!.firstOrder.gapEv)).toBeCloseTo(0.2, 12);
    expect(Math.abs(Number(nfe.nfe!.centralEquation.gapEv) - 0.2)).toBeLessThan(0.01);
    // Two-band edges [Kittel], calc: ε(π/a) ± |U| = 1.076593107 / 1.276593107 eV.
    expect(Number(nfe.nfe!.firstOrder.lowerEv)).toBeCloseTo(1.076593107, 8);
    expect(Number(nfe.nfe!.firstOrder.upperEv)).toBeCloseTo(1.276593107, 8);
    expect(nfe.computed.map((c) => c.label)).toEqual(["first order 2|U_1|", expect.stringMatching(/^central equation \(\d+ plane waves\)$/)]);
    expect(nfe.inputs.map((i) => i.symbol)).toEqual(["Eg(Γ, 300 K)", "U_1", "a (period)", "m (band mass)"]);
    expect(nfe.codataEdition).toBe("CODATA 2018");
    expect(nfe.nfe!.periodFrom).toBe("revision");
  });

  it("fails a stated gap of |U| = 0.1 eV (U0·cos(Gx) has U_1 = U0/2: the amplitude entered as U_1) and says so", () => {
    const nfe = result(report(gap("0.1", "0.1"), { values: [] }), "nfe")!;
    expect(nfe.status).toBe("fail");
    expect(Number(nfe.residual!.value)).toBeCloseTo(-0.1, 3);
    expect(nfe.notes.join(" ")).toMatch(/half the computed one/);
  });

  it("takes the period from the material's lattice constant when the revision states none", () => {
    const nfe = result(report(gap("0.2", "0.1", { periodAngstrom: null })), "nfe")!;
    expect(nfe.status).toBe("pass");
    expect(nfe.nfe!.periodFrom).toBe("lattice constant");
    expect(nfe.inputs.find((i) => i.symbol === "a(300 K)")?.revisionId).toBe(gaas.a.revisionId);
  });

  it("does not run without coefficients, and says so when neither a period nor a lattice constant exists", () => {
    expect(result(report(gaas.eg300), "nfe")).toBeUndefined();
    const r = report(gap("0.2", "0.1", { periodAngstrom: null }), { values: [] });
    expect(result(r, "nfe")).toBeUndefined();
    expect(r.notRun[0]).toMatchObject({ kind: "nfe" });
  });
});

describe("nearly-free-electron check that does not converge", () => {
  it("says converged: false with the plane-wave count, warns where it would pass, and says why", () => {
    // U_1 = 10 eV and U_20 = 10 eV on a = 100 Å: the 201-wave cap comes before two quiet steps of 20.
    const coefficients = [{ n: 1, valueEv: "10" }, { n: 20, valueEv: "10" }];
    const subject = (stated: string) => value("eg", stated, "eV", { valley: "G", temperatureK: "300", potentialCoefficients: coefficients, periodAngstrom: "100" });
    const first = result(report(subject("1"), { values: [] }), "nfe")!;
    expect(first.nfe!.centralEquation).toMatchObject({ converged: false, planeWaves: 201 });
    expect(first.computed[1].label).toBe("central equation (201 plane waves, not converged)");
    expect(first.notes.join(" ")).toMatch(/did not converge .* cannot pass/);
    // Stated as exactly what the last basis gives: no pass on an unconverged number.
    const same = result(report(subject(first.nfe!.centralEquation.gapEv), { values: [] }), "nfe")!;
    expect(same.status).toBe("warn");
  });
});

describe("Varshni consistency [Var67] with the GaAs Γ fit of [V01]", () => {
  it("passes 1.4225 eV at 300 K against the fit's 1.4224821 eV (calc) at 10 meV", () => {
    const r = report(gaas.eg300);
    const v = result(r, "varshni")!;
    expect(v.status).toBe("pass");
    expect(Number(v.computed[0].value)).toBeCloseTo(1.4224821, 7);
    expect(v.tolerance).toMatchObject({ label: "absolute", unit: "eV" });
    expect(Number(v.tolerance!.value)).toBe(0.01);
    expect(v.inputs.map((i) => i.revisionId)).toEqual([gaas.eg0.revisionId, gaas.alpha.revisionId, gaas.beta.revisionId, gaas.eg300.revisionId]);
    expect(v.title).toBe("Varshni fit at 300 K");
  });

  it("fails 1.40 eV at 300 K (22.5 meV off the fit) at the default 10 meV, and passes it at an admin's 30 meV", () => {
    expect(result(report({ ...gaas.eg300, value: "1.40" }), "varshni")!.status).toBe("fail");
    const quantities = QUANTITY_ROWS.map((q) => (q.key === "eg" ? { ...q, checkTolerance: "0.030" } : q));
    expect(result(report({ ...gaas.eg300, value: "1.40" }, { quantities }), "varshni")!.status).toBe("pass");
  });

  it("checks every stated gap of the valley when the subject is part of the fit, and warns outside the fit range", () => {
    const at77 = value("eg", "1.5076", "eV", { valley: "G", temperatureK: "77" }); // calc 1.507596 eV
    const at500 = value("eg", "1.3271", "eV", { valley: "G", temperatureK: "500" }); // calc 1.327060 eV
    const r = report(gaas.alpha, { values: [...gaasValues, at77, at500] });
    const checks = r.results.filter((x) => x.kind === "varshni");
    expect(checks.map((c) => [c.title, c.status])).toEqual([
      ["Varshni fit at 77 K", "pass"],
      ["Varshni fit at 300 K", "pass"],
      ["Varshni fit at 500 K", "warn"],
    ]);
    expect(checks[2].notes.join(" ")).toMatch(/outside the fitted range 0–400 K/);
  });
});

describe("range check", () => {
  it("fails a value outside the quantity's plausible range (a gap of 14.25 eV, a unit slip)", () => {
    const r = report({ ...gaas.eg300, value: "14.25" });
    expect(result(r, "range")!.status).toBe("fail");
    expect(r.status).toBe("fail");
  });

  it("passes the range edges themselves (inclusive) and fails just outside, compared exactly", () => {
    expect(result(report(value("eg", "7", "eV", { valley: "G", temperatureK: "300" }), { values: [] }), "range")!.status).toBe("pass");
    expect(result(report(value("eg", "7.000000000000000001", "eV", { valley: "G", temperatureK: "300" }), { values: [] }), "range")!.status).toBe("fail");
    expect(result(report(value("eg", "-0.001", "eV", { valley: "G", temperatureK: "300" }), { values: [] }), "range")!.status).toBe("fail");
  });
});

describe("bowing check [V01] of Al(x)Ga(1−x)As", () => {
  const alas = [
    value("eg", "3.099", "eV", { valley: "G" }),
    value("varshni_alpha", "0.885", "meV/K", { valley: "G" }),
    value("varshni_beta", "530", "K", { valley: "G" }),
  ];
  const c0 = value("eg_bowing_c0", "-0.127", "eV", { valley: "G" });
  const c1 = value("eg_bowing_c1", "1.310", "eV", { valley: "G" });
  const algaas = { key: "AlGaAs", name: "Aluminium gallium arsenide", kind: "alloy" as const };
  const endMembers = { a: { material: { key: "AlAs", name: "Aluminium arsenide", kind: "binary" as const }, values: alas }, b: { material: GAAS, values: gaasValues } };

  it("passes 1.838 eV at x = 0.3, 300 K against the bowed 1.8408 eV (calc: end points by Varshni first)", () => {
    const gap = value("eg", "1.838", "eV", { valley: "G", temperatureK: "300", composition: "0.30000" });
    const r = buildCheckReport({ origin: "proposal", material: algaas, subject: gap, values: [c0, c1], quantities: QUANTITY_ROWS, endMembers });
    const b = result(r, "bowing")!;
    expect(b.status).toBe("pass");
    // calc: 0.3·3.003036 + 0.7·1.422482 − 0.21·(−0.127 + 1.310·0.3)
    expect(Number(b.computed[0].value)).toBeCloseTo(1.840788, 5);
    expect(b.inputs.filter((i) => i.material === "AlAs")).toHaveLength(3);
    expect(b.inputs.filter((i) => i.material === "GaAs")).toHaveLength(3);
  });

  it("says what is missing without the end members' fits", () => {
    const gap = value("eg", "1.838", "eV", { valley: "X", temperatureK: "300", composition: "0.3" });
    const r = buildCheckReport({ origin: "proposal", material: algaas, subject: gap, values: [c0], quantities: QUANTITY_ROWS, endMembers });
    expect(result(r, "bowing")).toBeUndefined();
    expect(r.notRun.find((n) => n.kind === "bowing")?.reason).toMatch(/C0\(X\).*0 K fit of AlAs at X/);
  });
});

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

import { describe, expect, it } from "vitest";
import { bowedGapEv, bowingCurveAtTemperature, kaneMassM0, varshniGap } from "../physics";
import type { ReleaseContent } from "../release-format";
import { evaluateRelease, parseEvaluationQuery, type EvaluatedValue } from "./release";
import { sampleStats, seededNormal, v01Release } from "./test-support";
import { combine, stated, uncertaintyOf } from "./uncertainty";

// The GUM law of propagation (JCGM 100:2008, 5.1.2, first order) against a Monte Carlo propagation of distributions
// (JCGM 101:2008, 7: draw every input from its distribution, evaluate the model, take the standard deviation of the
// results), 10⁴ seeded draws. Model inputs: the [V01] values (Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815
// (2001), from memory); the standard uncertainties are assumed for the test (the paper states none), of the size a
// fit or a compilation would carry. With 10⁴ draws the sample standard deviation scatters by about 1/√(2·10⁴) = 0.7 %,
// so 5 % leaves room for the second-order terms the GUM's first order leaves out.

const DRAWS = 10_000;
const UNCERTAIN = {
  "GaAs.eg0": "0.002", "GaAs.alpha": "0.02", "GaAs.beta": "20",
  "AlAs.eg0": "0.01", "AlAs.alpha": "0.05", "AlAs.beta": "40",
  "AlGaAs.c0": "0.02", "AlGaAs.c1": "0.05",
  "GaAs.ep": "0.5", "GaAs.f": "0.2", "GaAs.delta": "0.005",
};

function evaluate(content: ReleaseContent, q: Record<string, string>): Map<string, EvaluatedValue> {
  const parsed = parseEvaluationQuery(q);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.errors));
  const r = evaluateRelease(content, "0".repeat(64), parsed.query, "test");
  if (!r.ok) throw new Error(r.message);
  return new Map(r.evaluation.materials[0].values.map((v) => [v.id, v]));
}

/**
 * JCGM 101 style: every input with an uncertainty drawn from N(value, u²), the model evaluated per draw with the
 * physics functions themselves (not the propagation code under test), and the standard deviation of the results.
 */
function monteCarlo(seed: string, draw: (n: (value: number, u: string) => number) => number): { mean: number; sd: number } {
  const normal = seededNormal(seed);
  const n = (value: number, u: string) => value + Number(u) * normal();
  return sampleStats(Array.from({ length: DRAWS }, () => draw(n)));
}

const U = UNCERTAIN;
const gaasGamma = (n: (value: number, u: string) => number) => ({ eg0Ev: n(1.519, U["GaAs.eg0"]), alphaMevPerK: n(0.5405, U["GaAs.alpha"]), betaK: n(204, U["GaAs.beta"]) });

function expectWithinFivePercent(gum: string | null, mc: number) {
  expect(gum).not.toBeNull();
  expect(Math.abs(Number(gum) - mc) / mc, `GUM ${gum} against Monte Carlo ${mc}`).toBeLessThan(0.05);
}

describe("GUM first order against a seeded Monte Carlo (JCGM 101:2008 style, 10⁴ draws)", () => {
  const content = v01Release(UNCERTAIN);

  it("Varshni: GaAs Eg(Γ) at 77 K and 300 K from u(Eg0), u(α), u(β) [Var67, V01]", () => {
    for (const t of ["77", "300"]) {
      const gum = evaluate(content, { temperature: t, material: "GaAs" }).get("eg-G")!;
      expect(gum.uncertaintyStatus).toBe("complete");
      const mc = monteCarlo(`varshni-${t}`, (n) => varshniGap(gaasGamma(n), Number(t)).valueEv);
      expectWithinFivePercent(gum.standardUncertainty, mc.sd);
      // The budget by hand: u² = u(Eg0)² + (T²/(T + β)·u(α)/1000)² + (αT²/(T + β)²·u(β))² (JCGM 100, 5.1.2).
      const T = Number(t);
      const hand = Math.hypot(0.002, ((T * T) / (T + 204)) * 0.02e-3, ((0.5405e-3 * T * T) / (T + 204) ** 2) * 20);
      // Six significant digits are exported.
      expect(Math.abs(Number(gum.standardUncertainty) - hand) / hand).toBeLessThan(1e-5);
    }
  });

  it("bowing: Al(0.3)Ga(0.7)As Eg(Γ) at 300 K, end points by Varshni, with u(C0), u(C1) [V01]", () => {
    const q = { temperature: "300", material: "AlGaAs", x: "0.3" };
    const gum = evaluate(content, q).get("eg-G")!;
    const mc = monteCarlo("bowing", (n) => {
      const curve = bowingCurveAtTemperature({
        a: { eg0Ev: n(3.099, U["AlAs.eg0"]), alphaMevPerK: n(0.885, U["AlAs.alpha"]), betaK: n(530, U["AlAs.beta"]) },
        b: gaasGamma(n), c0Ev: n(-0.127, U["AlGaAs.c0"]), c1Ev: n(1.31, U["AlGaAs.c1"]),
      }, 300);
      return bowedGapEv(curve, 0.3);
    });
    expectWithinFivePercent(gum.standardUncertainty, mc.sd);
    expect(gum.inputs.map((i) => `${i.material ?? ""} ${i.symbol}`)).toEqual(expect.arrayContaining(["AlAs Eg(Γ, 0 K)", "GaAs β(Γ)", " C0(Γ)", " C1(Γ)"]));
  });

  it("Kane: GaAs m*e(Γ) at 77 K from u(Ep), u(F), u(Δso) and the Varshni gap [Kane57, V01]", () => {
    const q = { temperature: "77", material: "GaAs" };
    const gum = evaluate(content, q).get("kane-me")!;
    const mc = monteCarlo("kane", (n) => kaneMassM0({ epEv: n(28.8, U["GaAs.ep"]), f: n(-1.94, U["GaAs.f"]), deltaSoEv: n(0.341, U["GaAs.delta"]), egEv: varshniGap(gaasGamma(n), 77).valueEv }));
    expectWithinFivePercent(gum.standardUncertainty, mc.sd);
    // The mean of the draws sits on the first-order value to well inside one standard uncertainty.
    expect(Math.abs(mc.mean - Number(gum.value))).toBeLessThan(0.2 * Number(gum.standardUncertainty));
  });
});

describe("inputs without an uncertainty", () => {
  it("a value none of whose inputs states one says so and carries no number, never a zero", () => {
    const gamma = evaluate(v01Release(), { temperature: "300", material: "GaAs" }).get("eg-G")!;
    expect(gamma.standardUncertainty).toBeNull();
    expect(gamma.uncertaintyStatus).toBe("not-stated");
    expect(gamma.uncertaintyNotStated).toEqual(["Eg(Γ, 0 K)", "α(Γ)", "β(Γ)"]);
    expect(gamma.inputs.every((i) => i.uncertainty === null && !i.uncertaintyStated && i.contribution === null)).toBe(true);
  });

  it("a value some of whose inputs state one is partial and names the others", () => {
    const gamma = evaluate(v01Release({ "GaAs.eg0": "0.002" }), { temperature: "300", material: "GaAs" }).get("eg-G")!;
    expect(gamma).toMatchObject({ standardUncertainty: "0.00200000", uncertaintyStatus: "partial", uncertaintyNotStated: ["α(Γ)", "β(Γ)"] });
  });

  it("an input met twice is one input: its coefficients add before squaring (no double counting)", () => {
    const a = stated({ symbol: "a", value: "2", unit: "eV", recordId: 1, revisionId: 7, from: "registry", material: null, sourceLabel: null, uncertainty: "0.1" });
    // y = a − a is exactly zero whatever a is: its uncertainty is zero, not √2·u(a).
    const y = combine(0, [[a, 1], [a, -1]]);
    expect(uncertaintyOf(y).uncertainty.standard).toBe("0");
    const twice = uncertaintyOf(combine(4, [[a, 1], [a, 1]]));
    expect(twice.uncertainty.standard).toBe("0.200000");
    expect(twice.inputs).toHaveLength(1);
  });
});

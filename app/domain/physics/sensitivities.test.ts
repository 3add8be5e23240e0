import { derivative, evaluate } from "mathjs";
import { describe, expect, it } from "vitest";
import {
  bowedGapSensitivities, kaneMassSensitivities, latticeAtTemperatureSensitivities, latticeMatchedCompositionSensitivities, latticeMismatch,
  varshniGapSensitivities, vegardSensitivities,
} from ".";

// The analytic partial derivatives used by the GUM propagation, checked against mathjs's symbolic differentiation of
// the same formulas (Varshni 1967 [Var67]; quadratic bowing [V01]; Vegard [Vegard21]; Kane [Kane57]) at the [V01]
// GaAs/AlAs/InAs/InP point (table values from memory, see SOURCES in ./test-support.ts).

function d(expression: string, variable: string, scope: Record<string, number>): number {
  return derivative(expression, variable).evaluate(scope) as number;
}

function close(actual: number, expected: number) {
  expect(Math.abs(actual - expected)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(expected)));
}

describe("partial derivatives against mathjs.derivative", () => {
  it("Varshni: Eg(T) = Eg0 − (α/1000)T²/(T + β), α in meV/K, at GaAs Γ [V01] and 77 K, 300 K", () => {
    const eg = "eg0 - (alpha / 1000) * t^2 / (t + beta)";
    for (const t of [77, 300]) {
      const scope = { eg0: 1.519, alpha: 0.5405, beta: 204, t };
      const s = varshniGapSensitivities({ eg0Ev: 1.519, alphaMevPerK: 0.5405, betaK: 204 }, t);
      close(s.eg0, d(eg, "eg0", scope));
      close(s.alphaMevPerK, d(eg, "alpha", scope));
      close(s.betaK, d(eg, "beta", scope));
    }
  });

  it("a(T) = a300 + (T − 300)·dadt at 500 K [V01 GaAs]", () => {
    const s = latticeAtTemperatureSensitivities(500);
    const scope = { a300: 5.65325, dadt: 3.88e-5, t: 500 };
    close(s.a300, d("a300 + (t - 300) * dadt", "a300", scope));
    close(s.daDt, d("a300 + (t - 300) * dadt", "dadt", scope));
  });

  it("bowing Eg(x) = x·A + (1 − x)·B − x(1 − x)(C0 + C1·x) at x = 0.3 [V01 AlGaAs]", () => {
    const f = "x * A + (1 - x) * B - x * (1 - x) * (C0 + C1 * x)";
    const scope = { x: 0.3, A: 3.003, B: 1.4225, C0: -0.127, C1: 1.31 };
    const s = bowedGapSensitivities(0.3);
    close(s.egA, d(f, "A", scope));
    close(s.egB, d(f, "B", scope));
    close(s.c0, d(f, "C0", scope));
    close(s.c1, d(f, "C1", scope));
    const v = vegardSensitivities(0.3);
    close(v.aA, d("x * aA + (1 - x) * aB", "aA", { x: 0.3, aA: 5.6611, aB: 5.65325 }));
    close(v.aB, d("x * aA + (1 - x) * aB", "aB", { x: 0.3, aA: 5.6611, aB: 5.65325 }));
  });

  it("the lattice-matched x = (s − aB)/(aA − aB) and the mismatch (a − s)/s, In(x)Ga(1−x)As on InP [V01]", () => {
    const scope = { aA: 6.0583, aB: 5.65325, s: 5.8697 };
    const x = "(s - aB) / (aA - aB)";
    const s = latticeMatchedCompositionSensitivities({ aAAngstrom: 6.0583, aBAngstrom: 5.65325 }, 5.8697);
    close(s.aA, d(x, "aA", scope));
    close(s.aB, d(x, "aB", scope));
    close(s.substrate, d(x, "s", scope));
    const m = latticeMismatch(5.6611, 5.65325);
    close(m.value, evaluate("(a - s) / s", { a: 5.6611, s: 5.65325 }) as number);
    close(m.sensitivities.layer, d("(a - s) / s", "a", { a: 5.6611, s: 5.65325 }));
    close(m.sensitivities.substrate, d("(a - s) / s", "s", { a: 5.6611, s: 5.65325 }));
  });

  it("Kane m* = 1/(1 + 2F + Ep(Eg + 2Δ/3)/(Eg(Eg + Δ))) with the [V01] GaAs set", () => {
    const m = "1 / (1 + 2 * F + Ep * (Eg + 2 * D / 3) / (Eg * (Eg + D)))";
    const scope = { Ep: 28.8, F: -1.94, Eg: 1.519, D: 0.341 };
    const s = kaneMassSensitivities({ epEv: 28.8, f: -1.94, egEv: 1.519, deltaSoEv: 0.341 });
    close(s.ep, d(m, "Ep", scope));
    close(s.f, d(m, "F", scope));
    close(s.eg, d(m, "Eg", scope));
    close(s.deltaSo, d(m, "D", scope));
  });
});

import { describe, expect, it } from "vitest";
import { gaas, report, result, value } from "./test-fixtures";
import type { CheckValue } from "./types";

// [Kittel] ch. 7: the two-band gap 2|U_G|, edges ε(π/a) ± |U| (calc), the U0·cos(Gx) trap.

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

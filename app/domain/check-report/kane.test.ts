import { describe, expect, it } from "vitest";
import { gaas, gaasValues, QUANTITY_ROWS, report, result } from "./test-fixtures";

// [Kane57] Kane (1957) with the GaAs set of [V01] (from memory); calc: the worked example.

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

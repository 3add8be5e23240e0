import { describe, expect, it } from "vitest";
import { gaas, gaasValues, QUANTITY_ROWS, report, result, value } from "./test-fixtures";

// [Var67] Varshni (1967) with the GaAs Γ fit of [V01] (from memory); calc: the worked examples.

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

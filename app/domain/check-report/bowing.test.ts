import { describe, expect, it } from "vitest";
import { buildCheckReport } from "./report";
import { GAAS, gaasValues, QUANTITY_ROWS, result, value } from "./test-fixtures";

// [V01] Al(x)Ga(1−x)As bowing C = −0.127 + 1.310x eV, end points by [Var67] (from memory); calc: the bowed gap.

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

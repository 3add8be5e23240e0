import { describe, expect, it } from "vitest";
import { gaas, report, result, value } from "./test-fixtures";

// The plausible ranges of the quantity catalogue (a fact of the trade: a gap of 14.25 eV is a unit slip).

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

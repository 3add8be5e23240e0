import { describe, expect, it } from "vitest";
import { toDecimalString } from "./decimal";

describe("toDecimalString", () => {
  it("writes twelve significant digits by default, rounding half-even", () => {
    expect(toDecimalString(1.4224821428571428)).toBe("1.42248214286");
    expect(toDecimalString(0.06701880585643)).toBe("0.0670188058564");
  });

  it("keeps trailing zeros so every figure shows at least the digits asked for", () => {
    expect(toDecimalString(1)).toBe("1.00000000000");
    expect(toDecimalString(5.655605, 10)).toBe("5.655605000");
  });

  it("never uses exponent notation", () => {
    expect(toDecimalString(8.617333262e-5, 10)).toBe("0.00008617333262");
    expect(toDecimalString(6.02214076e23, 10)).toBe("602214076000000000000000");
    expect(toDecimalString(-0.127, 10)).toBe("-0.1270000000");
  });

  it("writes zero as 0 and refuses non-finite numbers", () => {
    expect(toDecimalString(0)).toBe("0");
    expect(() => toDecimalString(Number.NaN)).toThrow(RangeError);
    expect(() => toDecimalString(1, 0)).toThrow(RangeError);
  });
});

import fc from "fast-check";
import { describe, expect, it } from "vitest";
import { decimalColumnValue, normalisedDecimalKey, parseExactDecimal, sameNumber, scaleExact, exactDecimal } from "./exact-decimal";

// Significant digits follow common practice: leading zeros do not count, stated trailing zeros do.
// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001): GaAs table values from memory.
describe("parseExactDecimal", () => {
  it.each([
    ["5.65325", "5.65325", 6], // GaAs a(300 K) [V01]
    ["1.5190", "1.5190", 5],
    ["1.519", "1.519", 4], // GaAs Eg(Γ, 0 K) [V01]
    ["0.0400", "0.0400", 3],
    ["3.88e-5", "0.0000388", 3], // GaAs da/dT in Å/K [V01]
    ["3.88E-5", "0.0000388", 3],
    ["\u22121.94", "-1.94", 3], // GaAs F [V01], typed with a typographic minus
    ["+0.5405", "0.5405", 4],
    [".5", "0.5", 1],
    ["5.", "5", 1],
    ["204", "204", 3],
    ["007", "7", 1],
    ["0", "0", 1],
    ["0.00", "0.00", 2],
    ["-0.0", "0.0", 1],
    ["2.0e3", "2000", 2],
    ["5.431020511", "5.431020511", 10], // Si lattice parameter in Å [CODATA18]
    ["1.23456789012345678901234567", "1.23456789012345678901234567", 27],
    ["  1.4225 ", "1.4225", 5],
  ])("reads %j as %s with %i significant digits", (input, canonical, digits) => {
    const r = parseExactDecimal(input);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.value.canonical).toBe(canonical);
    expect(r.value.significantDigits).toBe(digits);
  });

  it.each(["", "  ", "abc", "1,5", "1 000", "1.2.3", "NaN", "Infinity", "-Infinity", "0x10", "1e", "e5", ".", "--1", "1e999", "1e1234"])(
    "refuses %j",
    (input) => {
      expect(parseExactDecimal(input).ok).toBe(false);
    },
  );

  it("tells a decimal comma apart from other mistakes", () => {
    const r = parseExactDecimal("1,424");
    expect(r.ok ? "" : r.message).toMatch(/point as the decimal separator/);
  });

  // Independent reference: the exact value m·10^−k in BigInt arithmetic, written out by hand.
  function plain(mantissa: bigint, scale: number): string {
    const negative = mantissa < 0n;
    const digits = (negative ? -mantissa : mantissa).toString().padStart(scale + 1, "0");
    const body = scale === 0 ? digits : `${digits.slice(0, digits.length - scale)}.${digits.slice(digits.length - scale)}`;
    return negative && /[1-9]/.test(body) ? `-${body}` : body;
  }

  it("round-trips every plain decimal exactly, also when written with an exponent", () => {
    fc.assert(
      fc.property(fc.bigInt({ min: -(10n ** 30n), max: 10n ** 30n }), fc.integer({ min: 0, max: 25 }), (m, k) => {
        const text = plain(m, k);
        const direct = parseExactDecimal(text);
        const viaExponent = parseExactDecimal(`${m}e-${k}`);
        expect(direct.ok && direct.value.canonical).toBe(text);
        expect(viaExponent.ok && viaExponent.value.canonical).toBe(text);
        expect(direct.ok && parseExactDecimal(direct.value.canonical).ok && exactDecimal(direct.value.canonical).canonical).toBe(text);
      }),
      { numRuns: 500 },
    );
  });

  it("keeps digits a binary double would lose", () => {
    const text = "0.1000000000000000055511151231257827";
    expect(exactDecimal(text).canonical).toBe(text);
    expect(String(Number.parseFloat(text))).not.toBe(text);
  });
});

describe("scaleExact", () => {
  it.each([
    ["0.565325", "10", "5.65325", 6], // nm → Å, GaAs a [V01]
    ["540.5", "0.001", "0.5405", 4], // µeV/K → meV/K, GaAs α [V01]
    ["1519.0", "0.001", "1.5190", 5], // meV → eV keeps the stated trailing zero
    ["565.325", "0.01", "5.65325", 6], // pm → Å
    ["0.0005405", "1000", "0.5405", 4], // eV/K → meV/K
    ["1.5", "1000", "1500", 2],
    ["0.00", "0.001", "0.00000", 2],
    ["-1.94", "1", "-1.94", 3],
  ])("%s × %s = %s (%i digits)", (input, factor, canonical, digits) => {
    const r = scaleExact(exactDecimal(input), factor);
    expect(r.canonical).toBe(canonical);
    expect(r.significantDigits).toBe(digits);
  });

  it("never rounds a product that needs more digits than were stated", () => {
    expect(scaleExact(exactDecimal("1.5"), "0.333").canonical).toBe("0.4995");
  });
});

describe("helpers", () => {
  it.each([
    ["300.000", "300"],
    ["0.30", "0.3"],
    ["295.65", "295.65"],
    ["0", "0"],
  ])("writes the condition %s as %s", (input, key) => {
    expect(normalisedDecimalKey(input)).toBe(key);
  });

  it("rounds the numeric copy half-even only beyond the column's 20 places", () => {
    expect(decimalColumnValue("0.0000388")).toBe("0.0000388");
    expect(decimalColumnValue("1.0000000000000000000050")).toBe("1.00000000000000000000");
    expect(decimalColumnValue("1.0000000000000000000150")).toBe("1.00000000000000000002");
  });

  it("compares numbers, not spellings", () => {
    expect(sameNumber("1.519", "1.5190")).toBe(true);
    expect(sameNumber("1.519", "1.5191")).toBe(false);
  });
});

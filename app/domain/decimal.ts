import Decimal from "decimal.js";

/** Significant digits of a derived number in pages, the CLI and exports. */
export const DERIVED_SIGNIFICANT_DIGITS = 12;

/**
 * A derived (binary floating-point) number as a plain decimal string with exactly `significantDigits`
 * significant digits, rounded half-even, never in exponent form: toDecimalString(1.4224821428, 12) →
 * "1.42248214286", toDecimalString(1, 12) → "1.00000000000". Zero is "0".
 */
export function toDecimalString(value: number, significantDigits = DERIVED_SIGNIFICANT_DIGITS): string {
  if (!Number.isFinite(value)) throw new RangeError(`cannot write ${value} as a decimal`);
  if (!(Number.isInteger(significantDigits) && significantDigits >= 1)) {
    throw new RangeError(`significant digits must be a positive integer (got ${significantDigits})`);
  }
  if (value === 0) return "0";
  const rounded = new Decimal(value).toSignificantDigits(significantDigits, Decimal.ROUND_HALF_EVEN);
  const decimalPlaces = Math.max(0, significantDigits - 1 - rounded.e);
  return rounded.toFixed(decimalPlaces);
}

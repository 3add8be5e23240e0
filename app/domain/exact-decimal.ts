import Decimal from "decimal.js";

// Stored values are exact: decimal.js with room for any value a person types, never binary floats.
const Exact = Decimal.clone({ precision: 80, rounding: Decimal.ROUND_HALF_EVEN, toExpNeg: -100, toExpPos: 100 });
export type ExactNumber = InstanceType<typeof Exact>;

export type ExactDecimal = {
  /** The value as a decimal.js number (exact, arbitrary precision). */
  decimal: ExactNumber;
  /** Plain decimal string, no exponent, stated precision kept: "1.5190", "0.0000388", "-1.94". */
  canonical: string;
  /** Digits as stated, leading zeros excluded, trailing zeros included: "1.5190" → 5, "0.0400" → 3. */
  significantDigits: number;
  /** Digits after the decimal point in `canonical`. */
  decimalPlaces: number;
};

export type DecimalParseResult = { ok: true; value: ExactDecimal } | { ok: false; message: string };

// Sign, digits with an optional point, optional exponent; a leading or trailing point is accepted ("0.5" may be typed ".5").
const DECIMAL_PATTERN = /^([+-]?)(\d*)(?:\.(\d*))?(?:[eE]([+-]?\d{1,3}))?$/;

// The stored columns hold 64 characters; longer plain forms are typing errors, not measurements.
const MAX_CANONICAL_LENGTH = 60;

const MINUS_SIGNS = /[\u2212\u2013\u2012\uFE63\uFF0D]/g;

function countSignificant(digits: string, fractionLength: number): number {
  const stripped = digits.replace(/^0+/, "");
  // Zero: its precision is carried by its decimal places ("0.00" has two).
  if (stripped === "") return Math.max(1, fractionLength);
  return stripped.length;
}

/**
 * Parses a decimal as a person types it ("1.5190", "3.88e-5", "−1.94" with a typographic minus) into an
 * exact value that keeps the significant digits as stated. Commas, spaces, NaN and infinities are refused.
 */
export function parseExactDecimal(raw: string): DecimalParseResult {
  const text = raw.trim().replace(MINUS_SIGNS, "-");
  if (text === "") return { ok: false, message: "Enter a number." };
  const m = DECIMAL_PATTERN.exec(text);
  if (!m) {
    if (/,/.test(text)) return { ok: false, message: "Use a point as the decimal separator, without thousands separators." };
    return { ok: false, message: `“${raw.trim()}” is not a decimal number.` };
  }
  const [, sign, intPart = "", fracPart = "", expPart] = m;
  if (intPart === "" && fracPart === "") return { ok: false, message: `“${raw.trim()}” is not a decimal number.` };
  const exponent = expPart ? Number.parseInt(expPart, 10) : 0;
  const digits = intPart + fracPart;
  const significantDigits = countSignificant(digits, fracPart.length);
  const decimalPlaces = Math.max(0, fracPart.length - exponent);
  const decimal = new Exact(`${sign}${intPart || "0"}.${fracPart || "0"}e${exponent}`);
  const canonical = plainString(decimal, decimalPlaces);
  if (canonical.length > MAX_CANONICAL_LENGTH) return { ok: false, message: "The number has too many digits to keep." };
  return { ok: true, value: { decimal, canonical, significantDigits, decimalPlaces } };
}

/** Like parseExactDecimal, but throws: for values the code itself states (catalogue ranges, factors, seed data). */
export function exactDecimal(raw: string): ExactDecimal {
  const r = parseExactDecimal(raw);
  if (!r.ok) throw new RangeError(r.message);
  return r.value;
}

/** A decimal as a plain string with exactly `decimalPlaces` digits after the point; "-0" is written "0". */
export function plainString(value: ExactNumber, decimalPlaces: number): string {
  const s = value.toFixed(decimalPlaces);
  return /^-0(\.0*)?$/.test(s) ? s.slice(1) : s;
}

/**
 * Multiplies a stated value exactly by a conversion factor (an exact decimal string) and keeps its stated
 * precision: 0.565325 nm × 10 → "5.65325" Å (6 digits), 540.5 µeV/K × 0.001 → "0.5405" meV/K, 1519.0 meV ×
 * 0.001 → "1.5190" eV. The product is never rounded; trailing zeros are added only to show the stated digits.
 */
export function scaleExact(value: ExactDecimal, factor: string): ExactDecimal {
  const f = exactDecimal(factor).decimal;
  const product = value.decimal.times(f);
  const exactPlaces = Math.max(0, product.decimalPlaces());
  let places = exactPlaces;
  if (!product.isZero()) {
    const leadingExponent = product.abs().e;
    places = Math.max(exactPlaces, value.significantDigits - 1 - leadingExponent);
  } else {
    places = Math.max(exactPlaces, value.decimalPlaces + Math.max(0, -f.e));
  }
  return { decimal: product, canonical: plainString(product, places), significantDigits: value.significantDigits, decimalPlaces: places };
}

/** Exact comparison of two decimal strings: -1, 0 or 1. */
export function compareDecimalStrings(a: string, b: string): number {
  return exactDecimal(a).decimal.comparedTo(exactDecimal(b).decimal);
}

/** Whether two decimal strings denote the same number ("1.519" and "1.5190" do). */
export function sameNumber(a: string, b: string): boolean {
  return compareDecimalStrings(a, b) === 0;
}

/** The canonical form of a condition such as a temperature or a composition: no trailing zeros ("300.000" → "300"). */
export function normalisedDecimalKey(raw: string): string {
  const d = exactDecimal(raw).decimal;
  return plainString(d, Math.max(0, d.decimalPlaces()));
}

/** A numeric copy for a DECIMAL(p, s) column: exact when it fits, otherwise rounded half-even to `scale` places. */
export function decimalColumnValue(canonical: string, scale = 20): string {
  const d = exactDecimal(canonical).decimal;
  return plainString(d.toDecimalPlaces(scale, Decimal.ROUND_HALF_EVEN), Math.min(scale, Math.max(0, d.decimalPlaces())));
}

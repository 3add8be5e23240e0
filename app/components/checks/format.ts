import type { CheckFigure } from "~/domain/check-report";
import { toDecimalString } from "~/domain/decimal";
import { displayUnit } from "~/domain/units";

/** Where a record's page lives (the registry's record route). */
export function recordHref(recordId: number): string {
  return `/records/${recordId}`;
}

const MINUS = "\u2212";

/** A derived number shortened for reading: six significant digits, a true minus sign. */
export function readable(value: string | number, digits = 6): string {
  const n = typeof value === "number" ? value : Number(value);
  if (!Number.isFinite(n)) return String(value);
  return toDecimalString(n, digits).replace(/(\.\d*?)0+$/, "$1").replace(/\.$/, "").replace("-", MINUS);
}

/** A stated value exactly as stored, with a true minus sign. */
export function exact(value: string): string {
  return value.replace(/^-/, MINUS);
}

export function withUnit(value: string, unit: string): string {
  const u = displayUnit(unit);
  return u ? `${value} ${u}` : value;
}

/** A residual or tolerance: eV read in meV, a relative one in per cent. */
export function smallFigure(f: CheckFigure, signed = false): string {
  const n = Number(f.value);
  const sign = signed && n > 0 ? "+" : "";
  if (f.unit === "eV") return `${sign}${readable(n * 1000, 4)} meV`;
  if (f.unit === "") return `${sign}${readable(n * 100, 4)} %`;
  return `${sign}${readable(n, 4)} ${displayUnit(f.unit)}`;
}

import { expect } from "vitest";

// The published sources of the check values, named by key beside each check.
export const SOURCES = {
  V01: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89(11), 5815–5875 (2001), doi:10.1063/1.1368156 (table values from memory)",
  Var67: "Y. P. Varshni, Physica 34, 149–154 (1967)",
  CODATA18: "E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor, Rev. Mod. Phys. 93, 025010 (2021)",
  Kittel: "C. Kittel, Introduction to Solid State Physics, 8th ed. (Wiley, 2005), ch. 7",
  AM: "N. W. Ashcroft, N. D. Mermin, Solid State Physics (1976), ch. 8–9",
  AS: "M. Abramowitz, I. A. Stegun, Handbook of Mathematical Functions (1964), ch. 20, Table 20.1; NIST DLMF §28",
  Kane57: "E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957)",
  Vegard21: "L. Vegard, Z. Phys. 5, 17 (1921)",
  calc: "computed from the listed inputs with the formula named beside the check (worked examples from the sources above)",
} as const;

export type SourceKey = keyof typeof SOURCES;

/**
 * The value agrees with a published one to every digit printed: |actual − printed| ≤ half a unit in the last
 * printed place (plus `slack`, for a known extra error such as a convergence threshold).
 */
export function expectPrinted(actual: number, printed: string, source: SourceKey, slack = 0): void {
  const decimals = printed.includes(".") ? printed.split(".")[1].replace(/e.*$/i, "").length : 0;
  const exponent = /e([+-]?\d+)$/i.exec(printed);
  const halfUnit = 0.5 * 10 ** (-decimals + (exponent ? Number(exponent[1]) : 0));
  expect(
    Math.abs(actual - Number(printed)),
    `${actual} against ${printed} [${source}] within ${halfUnit + slack}`,
  ).toBeLessThanOrEqual(halfUnit * (1 + 1e-9) + slack);
}

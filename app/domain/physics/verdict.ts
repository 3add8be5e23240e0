export type Verdict = "pass" | "warn" | "fail" | "none";

/** How far outside the tolerance a residual may go and still only warn. */
export const WARN_FACTOR = 3;

// pass when |residual| ≤ tolerance, warn up to WARN_FACTOR·tolerance, fail beyond.
export function verdictFromResidual(residual: number, tolerance: number): Exclude<Verdict, "none"> {
  const size = Math.abs(residual);
  if (!(size <= WARN_FACTOR * tolerance)) return "fail";
  return size <= tolerance ? "pass" : "warn";
}

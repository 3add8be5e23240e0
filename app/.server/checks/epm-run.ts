import type { z } from "zod";
import type { epmCheckResultSchema } from "~/domain/api-schemas";
import { toDecimalString } from "~/domain/decimal";
import {
  CODATA_EDITION,
  FORM_FACTOR_KEYS,
  GAP_POINTS,
  type PseudopotentialCheck,
  type PseudopotentialCheckInput,
  checkPseudopotential,
} from "~/domain/physics";

export type EpmCheckResult = z.infer<typeof epmCheckResultSchema>;

// One check diagonalises a few dozen matrices of up to 283 plane waves (a quarter of a second to seconds on a
// loaded machine), and the same material is checked again on every record page, review page and keystroke of a
// proposal: the last results are kept, keyed by every input. The function is pure, so a kept result is exact.
const MEMO_SIZE = 64;
const memo = new Map<string, PseudopotentialCheck>();

function keyOf(input: PseudopotentialCheckInput): string {
  return JSON.stringify([
    input.structure,
    input.latticeAngstrom,
    FORM_FACTOR_KEYS.map((k) => input.formFactorsEv[k] ?? null),
    GAP_POINTS.map((p) => input.stated?.[p] ?? null),
    input.toleranceEv ?? null,
    input.convergenceEv ?? null,
    input.maxPlaneWaves ?? null,
    input.bandPoints ?? 0,
  ]);
}

/** checkPseudopotential with the last results kept (least recently used out first). */
export function memoizedPseudopotentialCheck(input: PseudopotentialCheckInput): PseudopotentialCheck {
  const key = keyOf(input);
  const kept = memo.get(key);
  if (kept) {
    memo.delete(key);
    memo.set(key, kept);
    return kept;
  }
  const check = checkPseudopotential(input);
  memo.set(key, check);
  if (memo.size > MEMO_SIZE) memo.delete(memo.keys().next().value!);
  return check;
}

const d = (x: number) => toDecimalString(x);
const tenthMeV = (x: number) => Math.round(x * 1e4) / 1e4;

/** The check as the API and the page show it: derived numbers as decimal strings, band arrays as plotting data. */
export function epmResultOf(check: PseudopotentialCheck): EpmCheckResult {
  const gap = (point: (typeof GAP_POINTS)[number]) => {
    const g = check.gaps[point];
    return {
      gapEv: d(g.gapEv),
      statedEv: g.statedEv === null ? null : d(g.statedEv),
      residualEv: g.residualEv === null ? null : d(g.residualEv),
      verdict: g.verdict,
    };
  };
  const formFactorsEv: Record<string, string> = {};
  for (const key of FORM_FACTOR_KEYS) {
    const value = check.formFactorsEv[key];
    if (value !== undefined) formFactorsEv[key] = d(value);
  }
  return {
    structure: check.structure,
    latticeAngstrom: d(check.latticeAngstrom),
    formFactorsEv,
    gamma: gap("gamma"),
    x: { ...gap("x"), gammaXMinimum: { gapEv: d(check.gammaXMinimum.gapEv), fraction: d(check.gammaXMinimum.fraction) } },
    l: gap("l"),
    fundamental: { gapEv: d(check.fundamental.gapEv), valley: check.fundamental.valley },
    planeWaves: check.planeWaves,
    maxSquare: check.maxSquare,
    converged: check.converged,
    convergenceEv: d(check.convergenceEv),
    toleranceEv: d(check.toleranceEv),
    verdict: check.verdict,
    notes: check.notes,
    bands: check.bands
      ? {
          labels: check.bands.labels,
          distance: check.bands.points.map((p) => Math.round(p.distance * 1e6) / 1e6),
          energiesEv: check.bands.bandsEv.map((band) => band.map(tenthMeV)),
          planeWaves: check.bands.planeWaves,
          deviationEv: check.bands.deviationEv ?? 0,
        }
      : null,
    codataEdition: CODATA_EDITION,
  };
}

import type { z } from "zod";
import type { epmCheckResultSchema } from "~/domain/api-schemas";
import { toDecimalString } from "~/domain/decimal";
import { memoizedPseudopotentialCheck } from "~/domain/check-report/epm";
import { CODATA_EDITION, FORM_FACTOR_KEYS, GAP_POINTS, type PseudopotentialCheck } from "~/domain/physics";

export type EpmCheckResult = z.infer<typeof epmCheckResultSchema>;

export { memoizedPseudopotentialCheck };

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

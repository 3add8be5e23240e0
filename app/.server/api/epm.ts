import type { z } from "zod";
import type { epmCheckBodySchema } from "~/domain/api-schemas";
import { type FormFactors, rydbergToEv } from "~/domain/physics";
import { type EpmCheckResult, epmResultOf, memoizedPseudopotentialCheck } from "../checks/epm-run";
import { apiError } from "./respond";

/** Band structures on the API: about this many k-points along L–Γ–X–U|K–Γ. */
export const API_BAND_POINTS = 120;

/** The pseudopotential check of the physics module for a parsed request body. */
export function runEpmCheck(body: z.infer<typeof epmCheckBodySchema>): EpmCheckResult {
  const formFactorsEv: FormFactors = {};
  for (const [key, value] of Object.entries(body.formFactors)) {
    if (value !== undefined) formFactorsEv[key as keyof FormFactors] = body.formFactorUnit === "ry" ? rydbergToEv(value) : value;
  }
  try {
    const check = memoizedPseudopotentialCheck({
      structure: body.structure,
      latticeAngstrom: body.latticeAngstrom,
      formFactorsEv,
      stated: { gamma: body.stated.gammaEv ?? null, x: body.stated.xEv ?? null, l: body.stated.lEv ?? null },
      toleranceEv: body.toleranceEv,
      bandPoints: body.bands ? API_BAND_POINTS : undefined,
    });
    return epmResultOf(check);
  } catch (e) {
    if (e instanceof RangeError) throw apiError(422, "invalid_physics_input", e.message, null);
    throw e;
  }
}

import type { z } from "zod";
import type { nfeCheckBodySchema, nfeCheckResultSchema } from "~/domain/api-schemas";
import { toDecimalString } from "~/domain/decimal";
import { checkNfeGap, CODATA_EDITION, PhysicsInputError } from "~/domain/physics";
import { apiError } from "./respond";

// The physics names its own inputs; the request body calls them so.
const BODY_FIELDS: Record<string, string> = { period: "periodAngstrom", mass: "mass" };

/** The nearly-free-electron check of the physics module, its derived numbers written as decimal strings. */
export function runNfeCheck(body: z.infer<typeof nfeCheckBodySchema>): z.infer<typeof nfeCheckResultSchema> {
  const seen = new Set<number>();
  for (const [i, c] of body.coefficients.entries()) {
    if (seen.has(c.n)) throw apiError(422, "duplicate_coefficient", `U_${c.n} is given twice.`, `coefficients.${i}.n`);
    seen.add(c.n);
  }
  let check: ReturnType<typeof checkNfeGap>;
  try {
    check = checkNfeGap({
      periodAngstrom: body.periodAngstrom,
      coefficients: body.coefficients.map((c) => ({ n: c.n, energyEv: c.valueEv })),
      gapIndex: body.gap,
      massM0: body.mass,
      statedGapEv: body.statedGapEv,
      toleranceEv: body.toleranceEv,
    });
  } catch (e) {
    if (e instanceof PhysicsInputError) throw apiError(422, "invalid_physics_input", e.message, BODY_FIELDS[e.field] ?? null);
    if (e instanceof RangeError) throw apiError(422, "invalid_physics_input", e.message, null);
    throw e;
  }
  const d = (x: number) => toDecimalString(x);
  return {
    gap: check.gapIndex,
    kPiOverA: check.kPiOverA,
    firstOrder: { gapEv: d(check.firstOrder.gapEv), lowerEv: d(check.firstOrder.lowerEv), upperEv: d(check.firstOrder.upperEv) },
    centralEquation: {
      gapEv: d(check.centralEquation.gapEv), lowerEv: d(check.centralEquation.lowerEv), upperEv: d(check.centralEquation.upperEv),
      planeWaves: check.centralEquation.planeWaves, converged: check.centralEquation.converged,
    },
    statedGapEv: check.statedGapEv === null ? null : d(check.statedGapEv),
    toleranceEv: d(check.toleranceEv),
    residualEv: check.residualEv === null ? null : d(check.residualEv),
    verdict: check.verdict,
    notes: check.notes,
    codataEdition: CODATA_EDITION,
  };
}

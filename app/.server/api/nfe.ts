import type { z } from "zod";
import type { nfeCheckBodySchema, nfeCheckResultSchema } from "~/domain/api-schemas";
import { checkNfeGap, PhysicsInputError } from "~/domain/physics";
import { nfeCheckFigures } from "../checks/nfe-form";
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
  const { notes, codataEdition, ...figures } = nfeCheckFigures(check);
  return { gap: check.gapIndex, kPiOverA: check.kPiOverA, ...figures, verdict: check.verdict, notes, codataEdition };
}

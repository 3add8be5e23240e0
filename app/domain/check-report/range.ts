import { compareDecimalStrings } from "../exact-decimal";
import { displayUnit } from "../units";
import { attempt, baseResult, figure, inputOf, quantityOf, symbolOf, type ConsistencyCheck, type Context } from "./shared";
import type { CheckResult } from "./types";

// The value lies in the quantity's plausible range from the catalogue, compared exactly (inclusive).
function checkRange(ctx: Context): CheckResult | null {
  const { subject } = ctx;
  const q = quantityOf(ctx.inputs, subject.quantityKey);
  if (!q || subject.value === null || (q.rangeMin === null && q.rangeMax === null)) return null;
  const unit = displayUnit(q.canonicalUnit);
  const bounds = `${q.rangeMin ?? "−∞"} ≤ ${q.symbol} ≤ ${q.rangeMax ?? "∞"}${unit ? ` ${unit}` : ""}`;
  const r = baseResult("range", "range", "Plausible range", bounds, `the plausible range of ${q.name.toLowerCase()} in the catalogue`);
  r.inputs.push(inputOf(ctx, subject));
  r.stated = figure(symbolOf(ctx.inputs, subject), subject.value, q.canonicalUnit);
  const value = subject.value;
  return attempt(r, () => {
    const below = q.rangeMin !== null && compareDecimalStrings(value, q.rangeMin) < 0;
    const above = q.rangeMax !== null && compareDecimalStrings(value, q.rangeMax) > 0;
    r.status = below || above ? "fail" : "pass";
    if (below) r.notes.push(`${value} lies below ${q.rangeMin}${unit ? ` ${unit}` : ""}: check the unit and the sign.`);
    if (above) r.notes.push(`${value} lies above ${q.rangeMax}${unit ? ` ${unit}` : ""}: check the unit.`);
  });
}

export const rangeCheck: ConsistencyCheck = { kind: "range", title: "Plausible range", run: checkRange };

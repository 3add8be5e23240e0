import { eq } from "drizzle-orm";
import { z } from "zod";
import { DEFAULT_TOLERANCES, TOLERANCE_RULES } from "~/domain/check-report";
import { compareDecimalStrings, parseExactDecimal } from "~/domain/exact-decimal";
import { audit } from "../audit";
import { db } from "../db/client";
import { quantities } from "../db/schema";
import type { CurrentUser } from "../permissions";
import type { Executor } from "../registry/executor";

export type ToleranceRow = {
  quantityKey: string;
  symbol: string;
  name: string;
  mode: "absolute" | "relative";
  unit: string;
  usedBy: string;
  /** As stored in quantities.check_tolerance, or null when the check uses its default. */
  stored: string | null;
  defaultValue: string;
  max: string;
};

/** The tolerances the consistency checks use, one per quantity whose tolerance a check reads. */
export async function listTolerances(ex: Executor = db()): Promise<ToleranceRow[]> {
  const rows = await ex.select().from(quantities);
  return TOLERANCE_RULES.flatMap((rule) => {
    const row = rows.find((q) => q.key === rule.quantityKey);
    if (!row) return [];
    return [{
      quantityKey: rule.quantityKey, symbol: row.symbol, name: row.name, mode: rule.mode, unit: rule.unit, usedBy: rule.usedBy,
      stored: row.checkTolerance, defaultValue: DEFAULT_TOLERANCES[rule.quantityKey], max: rule.max,
    }];
  });
}

const QUANTITY_KEYS = TOLERANCE_RULES.map((r) => r.quantityKey) as [string, ...string[]];

/** The admin form: one quantity and its new tolerance, a positive decimal no larger than the rule's cap. */
export const toleranceInput = z
  .object({
    quantity: z.enum(QUANTITY_KEYS, { message: "Choose a quantity whose tolerance a check uses." }),
    tolerance: z.string().trim().min(1, "Enter the tolerance."),
  })
  .superRefine((v, ctx) => {
    const rule = TOLERANCE_RULES.find((r) => r.quantityKey === v.quantity);
    if (!rule || v.tolerance === "") return;
    const parsed = parseExactDecimal(v.tolerance);
    const unit = rule.unit ? ` ${rule.unit}` : "";
    if (!parsed.ok) ctx.addIssue({ code: "custom", path: ["tolerance"], message: parsed.message });
    else if (parsed.value.decimal.lte(0)) ctx.addIssue({ code: "custom", path: ["tolerance"], message: "A tolerance is larger than zero." });
    else if (compareDecimalStrings(parsed.value.canonical, rule.max) > 0) ctx.addIssue({ code: "custom", path: ["tolerance"], message: `At most ${rule.max}${unit}: a wider tolerance would pass almost anything.` });
    else if (parsed.value.canonical.length > 20) ctx.addIssue({ code: "custom", path: ["tolerance"], message: "Use at most 20 characters." });
  });
export type ToleranceInput = z.infer<typeof toleranceInput>;

/** Sets a check tolerance and records who changed it from what to what. */
export async function setTolerance(
  actor: Pick<CurrentUser, "id" | "email">,
  input: ToleranceInput,
  request: Request | null,
): Promise<{ ok: true; notice: string } | { ok: false; errors: Record<string, string> }> {
  const canonical = parseExactDecimal(input.tolerance);
  if (!canonical.ok) return { ok: false, errors: { tolerance: canonical.message } };
  const value = canonical.value.canonical;
  const [row] = await db().select({ id: quantities.id, name: quantities.name, checkTolerance: quantities.checkTolerance }).from(quantities).where(eq(quantities.key, input.quantity)).limit(1);
  if (!row) return { ok: false, errors: { quantity: "This quantity is not in the catalogue." } };
  if (row.checkTolerance === value) return { ok: true, notice: `The tolerance of ${row.name.toLowerCase()} is already ${value}.` };
  await db().update(quantities).set({ checkTolerance: value }).where(eq(quantities.id, row.id));
  await audit(actor, "checks.tolerance_set", { type: "quantity", id: input.quantity }, request, { from: row.checkTolerance, to: value });
  return { ok: true, notice: `The tolerance of ${row.name.toLowerCase()} is now ${value}.` };
}

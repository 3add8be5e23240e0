import { eq, sql } from "drizzle-orm";
import { QUANTITIES, quantityByKey, quantityRow, type QuantityDefinition } from "~/domain/quantities";
import type { AcceptedUnit } from "~/domain/units";
import { quantities, records } from "../db/schema";
import type { Executor } from "./executor";

/**
 * Writes the TypeScript catalogue into the quantities table (by key). Symbols, names and descriptions follow the
 * catalogue; a check tolerance an admin changed in the table is kept.
 */
export async function syncQuantities(ex: Executor): Promise<void> {
  for (const q of QUANTITIES) {
    const row = quantityRow(q);
    await ex.insert(quantities).values(row).onDuplicateKeyUpdate({
      set: {
        symbol: row.symbol,
        name: row.name,
        canonicalUnit: row.canonicalUnit,
        acceptedUnits: row.acceptedUnits,
        rangeMin: row.rangeMin,
        rangeMax: row.rangeMax,
        description: row.description,
        dependsOnTemperature: row.dependsOnTemperature,
        dependsOnValley: row.dependsOnValley,
        dependsOnComposition: row.dependsOnComposition,
        checkTolerance: sql`COALESCE(${quantities.checkTolerance}, ${row.checkTolerance})`,
        sortOrder: row.sortOrder,
      },
    });
  }
  await ex.execute(sql`UPDATE ${records} r JOIN ${quantities} q ON q.id = r.quantity_id SET r.quantity_sort = q.sort_order WHERE r.quantity_sort <> q.sort_order`);
}

export type QuantityRow = typeof quantities.$inferSelect;

/**
 * The definition the services check against: modes from the catalogue, accepted units and the plausible range as
 * they stand in the table.
 */
export function definitionOf(row: QuantityRow): QuantityDefinition | null {
  const base = quantityByKey(row.key);
  if (!base) return null;
  return {
    ...base,
    acceptedUnits: (row.acceptedUnits as AcceptedUnit[]) ?? base.acceptedUnits,
    rangeMin: row.rangeMin ?? base.rangeMin,
    rangeMax: row.rangeMax ?? base.rangeMax,
    checkTolerance: row.checkTolerance ?? base.checkTolerance,
  };
}

export async function quantityIdsByKey(ex: Executor): Promise<Map<string, number>> {
  const rows = await ex.select({ id: quantities.id, key: quantities.key }).from(quantities);
  return new Map(rows.map((r) => [r.key, r.id]));
}

export async function findQuantity(ex: Executor, key: string): Promise<QuantityRow | null> {
  const [row] = await ex.select().from(quantities).where(eq(quantities.key, key)).limit(1);
  return row ?? null;
}

import { asc } from "drizzle-orm";
import type { z } from "zod";
import type { materialListSchema, quantityListSchema } from "~/domain/api-schemas";
import { quantityByKey } from "~/domain/quantities";
import type { AcceptedUnit } from "~/domain/units";
import { db } from "../db/client";
import { quantities } from "../db/schema";
import { listMaterialsByFamily } from "../registry/material-page";

/** Every material with its family, through the registry's own listing. */
export async function materialList(): Promise<z.infer<typeof materialListSchema>> {
  const families = await listMaterialsByFamily(db());
  const list = families.flatMap((f) =>
    f.materials.map((m) => ({
      key: m.key, name: m.name, formula: m.formula, kind: m.kind, structure: m.structure,
      family: { key: f.key, name: f.name }, compositionVariable: m.compositionVariable, activeRecords: m.activeRecords,
    })),
  );
  return { materials: list.sort((a, b) => (a.key < b.key ? -1 : a.key > b.key ? 1 : 0)) };
}

/** The quantities kept as records, in catalogue order. */
export async function quantityList(): Promise<z.infer<typeof quantityListSchema>> {
  const rows = await db().select().from(quantities).orderBy(asc(quantities.sortOrder), asc(quantities.key));
  return {
    quantities: rows
      .filter((q) => !quantityByKey(q.key)?.storedWith)
      .map((q) => ({
        key: q.key, symbol: q.symbol, name: q.name, canonicalUnit: q.canonicalUnit,
        acceptedUnits: (q.acceptedUnits as AcceptedUnit[]).map((u) => u.unit),
        rangeMin: q.rangeMin, rangeMax: q.rangeMax, description: q.description,
        dependsOnTemperature: q.dependsOnTemperature, dependsOnValley: q.dependsOnValley, dependsOnComposition: q.dependsOnComposition,
      })),
  };
}

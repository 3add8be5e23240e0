import { asc, eq } from "drizzle-orm";
import type { CatalogueMaterial, ProposalCatalogue } from "~/domain/proposal-schemas";
import type { QuantityDefinition } from "~/domain/quantities";
import { db } from "../db/client";
import { materialFamilies, materials, quantities } from "../db/schema";
import { definitionOf } from "../registry/catalogue";
import type { Executor } from "../registry/executor";

/** The materials and quantity definitions a proposal is checked against, as they stand in the database. */
export async function loadProposalCatalogue(ex: Executor = db()): Promise<ProposalCatalogue> {
  const [mats, qs] = await Promise.all([
    ex
      .select({
        id: materials.id, key: materials.key, name: materials.name, formula: materials.formula, kind: materials.kind,
        familyId: materials.familyId, familyName: materialFamilies.name,
      })
      .from(materials)
      .innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId))
      .orderBy(asc(materials.kind), asc(materials.key)),
    ex.select().from(quantities).orderBy(asc(quantities.sortOrder)),
  ]);
  return {
    materials: mats satisfies CatalogueMaterial[],
    quantities: qs.map(definitionOf).filter((q): q is QuantityDefinition => q !== null),
  };
}

import { sql } from "drizzle-orm";
import type { Db } from "~/.server/db/client";

// The registry table filters and sorts on copies kept on records; every write must keep them equal to the source rows.
export async function copiesOutOfStep(d: Db): Promise<number> {
  const rows = await d.execute(sql`
    SELECT COUNT(*) AS n FROM records r
    JOIN materials m ON m.id = r.material_id JOIN quantities q ON q.id = r.quantity_id
    JOIN revisions v ON v.id = r.current_revision_id
    WHERE NOT (r.family_id <=> m.family_id AND r.sort_material <=> m.key AND r.quantity_sort <=> q.sort_order
      AND r.current_method <=> v.method AND r.current_value_numeric <=> v.value_numeric AND r.current_source_id <=> v.source_id
      AND v.id = (SELECT MAX(id) FROM revisions WHERE record_id = r.id))`);
  return Number((rows as unknown as [{ n: number }[]])[0][0].n);
}

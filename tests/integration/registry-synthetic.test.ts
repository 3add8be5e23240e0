import { count, eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { records, revisions } from "~/.server/db/schema";
import { listRegistry, loadMaterialPage } from "~/.server/registry";
import { checkRange, quantityByKey } from "~/domain/quantities";
import { parseRegistryView } from "~/domain/registry-schemas";
import { generateSyntheticRegistry } from "../../seed-data/synthetic";
import { freshDatabase, type TestDatabase } from "../support/db";
import { copiesOutOfStep } from "./registry-copies";

let t: TestDatabase;
beforeAll(async () => {
  t = await freshDatabase("synthetic");
});
afterAll(async () => t?.drop());

describe("the synthetic registry generator", () => {
  it("writes exactly the revisions asked for, each record pointing at its newest revision", async () => {
    const summary = await generateSyntheticRegistry(t.url, { revisions: 3000, seed: 7 });
    expect(summary.revisions).toBe(3000);
    const [{ n }] = await t.db.select({ n: count() }).from(revisions);
    expect(Number(n)).toBe(3000);
    const [{ r }] = await t.db.select({ r: count() }).from(records);
    expect(Number(r)).toBe(summary.records);
    const [{ wrong }] = await t.db
      .select({ wrong: count() })
      .from(records)
      .where(sql`${records.currentRevisionId} <> (SELECT MAX(id) FROM ${revisions} WHERE ${revisions.recordId} = ${records.id})`);
    expect(Number(wrong)).toBe(0);
    const [{ gaps }] = await t.db
      .select({ gaps: count() })
      .from(records)
      .where(sql`(SELECT MAX(seq) FROM ${revisions} WHERE ${revisions.recordId} = ${records.id}) <> (SELECT COUNT(*) FROM ${revisions} WHERE ${revisions.recordId} = ${records.id})`);
    expect(Number(gaps)).toBe(0);
    expect(await copiesOutOfStep(t.db)).toBe(0);
  });

  it("draws every value inside its quantity's plausible range, retirements without a value", async () => {
    const rows = await t.db.execute(sql`SELECT q.key AS quantity, v.value, v.kind FROM revisions v JOIN records r ON r.id = v.record_id JOIN quantities q ON q.id = r.quantity_id`);
    const list = (rows as unknown as [{ quantity: string; value: string | null; kind: string }[]])[0];
    for (const row of list) {
      if (row.kind === "retirement") expect(row.value).toBeNull();
      else expect(checkRange(quantityByKey(row.quantity)!, row.value!), `${row.quantity} ${row.value}`).toBeNull();
    }
  });

  it("is served by the registry queries, filtered and paged", async () => {
    const page = await listRegistry(t.db, parseRegistryView(new URLSearchParams("family=nitrides&quantity=eg&sort=value&size=25&page=2")));
    const counted = await t.db.execute(
      sql`SELECT COUNT(*) AS n FROM records r JOIN materials m ON m.id = r.material_id JOIN material_families f ON f.id = m.family_id JOIN quantities q ON q.id = r.quantity_id WHERE f.key = 'nitrides' AND q.key = 'eg' AND r.status = 'active'`,
    );
    const expected = Number((counted as unknown as [{ n: number }[]])[0][0].n);
    expect(expected).toBeGreaterThan(25);
    expect(page.total).toBe(expected);
    expect(page.rows).toHaveLength(Math.min(25, expected - 25));
    expect(page.rows.every((r) => r.familyKey === "nitrides" && r.quantityKey === "eg")).toBe(true);
    const material = await loadMaterialPage(t.db, "SYN-00001");
    expect(material?.records.length).toBeGreaterThan(30);
    const [{ retired }] = await t.db.select({ retired: count() }).from(records).where(eq(records.status, "retired"));
    const all = await listRegistry(t.db, parseRegistryView(new URLSearchParams("status=all")));
    const active = await listRegistry(t.db, parseRegistryView(new URLSearchParams("")));
    expect(all.total - active.total).toBe(Number(retired));
  });

  it("refuses a database that already holds records", async () => {
    await expect(generateSyntheticRegistry(t.url, { revisions: 10 })).rejects.toThrow(/already holds records/);
  });
});

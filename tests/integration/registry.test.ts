import { count, eq, sql } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { materials, quantities, records, revisions, sources, users } from "~/.server/db/schema";
import {
  appendRevision, createRecordWithRevision, ensureSource, findCurrentValue, getCurrentRevision, isRegistryError, listRegistry, listSources,
  loadMaterialPage, loadRecord, loadSource, retireRecord, type RegistryRow,
} from "~/.server/registry";
import { exactDecimal } from "~/domain/exact-decimal";
import { parseRegistryView, type RegistryView } from "~/domain/registry-schemas";
import { loadTeam } from "../../seed-data/load";
import { DEMO_RECORDS, loadRegistry } from "../../seed-data/registry";
import { databaseRefusal, freshDatabase, type TestDatabase } from "../support/db";
import { copiesOutOfStep } from "./registry-copies";

// Values checked here come from the demo seed, whose sources are listed in DEMO_SOURCES (seed-data/registry.ts):
// [V01] Vurgaftman, Meyer, Ram-Mohan 2001 (from memory), [SzeNg] Sze & Ng 2007 (from memory), [CODATA18].

let t: TestDatabase;
const person = new Map<string, number>();

beforeAll(async () => {
  t = await freshDatabase("registry");
  await loadTeam(t.db);
  await loadRegistry(t.db);
  for (const u of await t.db.select().from(users)) person.set(u.email.split("@")[0], u.id);
});
afterAll(async () => t?.drop());

const view = (params: Record<string, string> = {}): RegistryView => parseRegistryView(new URLSearchParams(params));
const gaasGammaAt300 = { materialKey: "GaAs", quantityKey: "eg", conditions: { temperatureK: "300", valley: "G" as const, composition: null } };

async function tableCounts() {
  const out: Record<string, number> = {};
  for (const [name, table] of Object.entries({ materials, quantities, records, revisions, sources })) {
    const [{ n }] = await t.db.select({ n: count() }).from(table);
    out[name] = Number(n);
  }
  return out;
}

async function allRows(v: RegistryView): Promise<RegistryRow[]> {
  const first = await listRegistry(t.db, v);
  const rows = [...first.rows];
  for (let page = 2; page <= first.pageCount; page++) rows.push(...(await listRegistry(t.db, { ...v, page })).rows);
  return rows;
}

describe("the demo registry", () => {
  it("answers the GaAs Γ gap at 300 K with 1.4225 eV [V01, calc], its source, and its history newest first", async () => {
    const found = await findCurrentValue(t.db, gaasGammaAt300);
    expect(found?.revision).toMatchObject({ value: "1.4225", seq: 3, state: "current", method: "calculated" });
    expect(found?.revision.source).toMatchObject({ label: "Vurgaftman et al. 2001", doi: "10.1063/1.1368156" });
    expect(found?.revision.potentialCoefficients).toEqual([{ n: 1, valueEv: "0.71125" }, { n: 2, valueEv: "0.0250" }]);
    expect(found?.revision.periodAngstrom).toBe("5.65325");
    const page = await loadRecord(t.db, found!.recordId);
    expect(page?.record.revisions.map((r) => [r.seq, r.value, r.state])).toEqual([
      [3, "1.4225", "current"],
      [2, "1.4225", "superseded"],
      [1, "1.424", "superseded"], // [SzeNg]
    ]);
    expect(page?.record.revisions[2].source?.label).toBe("Sze & Ng 2007");
    const approved = page!.record.revisions.map((r) => Date.parse(r.approvedAt!));
    expect([...approved].sort((a, b) => b - a)).toEqual(approved);
    expect(page?.record.revisions[0]).toMatchObject({ proposedBy: "Tomás Okafor", approvedBy: "Ravi Menon" });
  });

  it("keeps what was typed and stores the exact canonical value", async () => {
    const a = await findCurrentValue(t.db, { materialKey: "GaAs", quantityKey: "lattice_a", conditions: { temperatureK: "300", valley: null, composition: null } });
    expect(a?.revision).toMatchObject({ value: "5.65325", significantDigits: 6, inputValue: "0.565325", inputUnit: "nm" }); // [V01]
    const alpha = await findCurrentValue(t.db, { materialKey: "GaAs", quantityKey: "varshni_alpha", conditions: { temperatureK: null, valley: "G", composition: null } });
    expect(alpha?.revision).toMatchObject({ value: "0.5405", inputValue: "540.5", inputUnit: "µeV/K", validFromK: "0", validToK: "400" }); // [V01]
    const measured = await findCurrentValue(t.db, { materialKey: "AlGaAs", quantityKey: "eg", conditions: { temperatureK: "300", valley: "G", composition: "0.3" } });
    expect(measured?.revision).toMatchObject({ value: "1.838", uncertainty: "0.003", inputUnit: "meV", method: "measured" });
    const [numeric] = await t.db.select({ v: revisions.valueNumeric }).from(revisions).where(eq(revisions.id, a!.revision.id));
    expect(exactDecimal(numeric.v!).decimal.eq(exactDecimal("5.65325").decimal)).toBe(true);
  });

  it("has a retired record whose retirement says why", async () => {
    const rows = await allRows(view({ status: "retired" }));
    expect(rows.map((r) => [r.materialKey, r.quantityKey, r.temperatureK])).toEqual([["GaAs", "lattice_a", "295.000"]]);
    const page = await loadRecord(t.db, rows[0].recordId);
    expect(page?.record.status).toBe("retired");
    expect(page?.record.revisions.map((r) => [r.kind, r.state])).toEqual([["retirement", "retired"], ["value", "superseded"]]);
    expect(page?.record.revisions[0].notes).toMatch(/mislabels/);
    expect(await getCurrentRevision(t.db, rows[0].recordId)).toBeNull();
  });

  it("loads twice without adding anything", async () => {
    const before = await tableCounts();
    await loadRegistry(t.db);
    expect(await tableCounts()).toEqual(before);
    expect(before.records).toBe(DEMO_RECORDS.length);
    expect(before.revisions).toBe(DEMO_RECORDS.reduce((n, r) => n + r.history.length + (r.retire ? 1 : 0), 0));
  });

  it("groups a material's records in catalogue order, each with its history", async () => {
    const page = await loadMaterialPage(t.db, "GaAs");
    expect(page?.material).toMatchObject({ name: "Gallium arsenide", structure: "zinc_blende", family: { key: "arsenides" } });
    const orders = page!.records.map((r) => r.quantity.sortOrder);
    expect([...orders].sort((a, b) => a - b)).toEqual(orders);
    expect(page!.records.every((r) => r.revisions.length >= 1 && r.revisions[0].id === r.currentRevisionId)).toBe(true);
    const alloy = await loadMaterialPage(t.db, "AlGaAs");
    expect(alloy?.material).toMatchObject({ endMemberA: { key: "AlAs" }, endMemberB: { key: "GaAs" } });
    expect(await loadMaterialPage(t.db, "Unobtainium")).toBeNull();
  });
});

describe("revisions in MariaDB", () => {
  it("are refused UPDATE and DELETE by the database itself", async () => {
    const [rev] = await t.db.select().from(revisions).limit(1);
    expect(await databaseRefusal(t.db.update(revisions).set({ value: "9.999" }).where(eq(revisions.id, rev.id)))).toMatch(/UPDATE command denied/);
    expect(await databaseRefusal(t.db.delete(revisions).where(eq(revisions.id, rev.id)))).toMatch(/DELETE command denied/);
    expect(await databaseRefusal(t.admin.db.update(revisions).set({ value: "9.999" }).where(eq(revisions.id, rev.id)))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.db.delete(revisions).where(eq(revisions.id, rev.id)))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.pool.query("UPDATE revisions SET notes = 'edited' WHERE id = ?", [rev.id]))).toMatch(/immutable/);
    expect(await databaseRefusal(t.admin.pool.query("DELETE FROM revisions"))).toMatch(/immutable/);
    const [after] = await t.db.select().from(revisions).where(eq(revisions.id, rev.id));
    expect(after).toEqual(rev);
  });
});

describe("appendRevision", () => {
  async function v01Source() {
    const [s] = await t.db.select().from(sources).where(eq(sources.doi, "10.1063/1.1368156"));
    return s.id;
  }

  it("appends in order, refuses a stale base, and keeps the history newest first", async () => {
    const found = (await findCurrentValue(t.db, { materialKey: "InAs", quantityKey: "delta_so", conditions: { temperatureK: null, valley: null, composition: null } }))!;
    const base = found.revision.id;
    const sourceId = await v01Source();
    const next = await t.db.transaction((tx) =>
      appendRevision(tx, {
        recordId: found.recordId, baseRevisionId: base, proposedBy: person.get("mei.tanaka")!, approvedBy: person.get("ravi.menon")!,
        revision: { value: "390", unit: "meV", method: "compilation", sourceId, notes: "same value typed in meV" },
      }),
    );
    expect(next).toMatchObject({ seq: 2, revision: { value: "0.390", inputValue: "390", inputUnit: "meV", significantDigits: 3 } });
    const stale = await t.db
      .transaction((tx) =>
        appendRevision(tx, {
          recordId: found.recordId, baseRevisionId: base, proposedBy: person.get("tomas.okafor")!, approvedBy: person.get("ravi.menon")!,
          revision: { value: "0.38", unit: "eV", method: "compilation", sourceId },
        }),
      )
      .catch((e) => e);
    expect(isRegistryError(stale, "stale")).toBe(true);
    expect(stale.details.currentRevisionId).toBe(next.revisionId);
    const page = await loadRecord(t.db, found.recordId);
    expect(page?.record.revisions.map((r) => [r.seq, r.value, r.state])).toEqual([[2, "0.390", "current"], [1, "0.39", "superseded"]]);
    expect(page?.record.currentRevisionId).toBe(next.revisionId);
  });

  it("lets only one of two concurrent approvals based on the same revision through", async () => {
    const found = (await findCurrentValue(t.db, { materialKey: "InAs", quantityKey: "ep", conditions: { temperatureK: null, valley: null, composition: null } }))!;
    const sourceId = await v01Source();
    const attempt = (value: string) =>
      t.db.transaction((tx) =>
        appendRevision(tx, {
          recordId: found.recordId, baseRevisionId: found.revision.id, proposedBy: person.get("mei.tanaka")!, approvedBy: person.get("ravi.menon")!,
          revision: { value, unit: "eV", method: "compilation", sourceId },
        }),
      );
    const results = await Promise.allSettled([attempt("21.5"), attempt("21.6")]);
    expect(results.filter((r) => r.status === "fulfilled")).toHaveLength(1);
    const refused = results.find((r) => r.status === "rejected") as PromiseRejectedResult;
    expect(isRegistryError(refused.reason, "stale")).toBe(true);
    const [{ n }] = await t.db.select({ n: count() }).from(revisions).where(eq(revisions.recordId, found.recordId));
    expect(Number(n)).toBe(2);
  });

  it("refuses a value outside the plausible range, a bad unit, and a self-approval, writing nothing", async () => {
    const found = (await findCurrentValue(t.db, { materialKey: "GaSb", quantityKey: "eg", conditions: { temperatureK: null, valley: "G", composition: null } }))!;
    const sourceId = await v01Source();
    const [{ n: before }] = await t.db.select({ n: count() }).from(revisions);
    const tryAppend = (revision: Record<string, unknown>, approvedBy = person.get("ravi.menon")!) =>
      t.db
        .transaction((tx) =>
          appendRevision(tx, {
            recordId: found.recordId, baseRevisionId: found.revision.id, proposedBy: person.get("mei.tanaka")!, approvedBy,
            revision: { method: "compilation", sourceId, ...revision } as never,
          }),
        )
        .catch((e) => e);
    const range = await tryAppend({ value: "81.2", unit: "eV" });
    expect(isRegistryError(range, "invalid") && range.details.fieldErrors?.value).toMatch(/plausible range/);
    const unit = await tryAppend({ value: "0.812", unit: "nm" });
    expect(isRegistryError(unit, "invalid") && unit.details.fieldErrors?.unit).toMatch(/not accepted/);
    const self = await tryAppend({ value: "0.812", unit: "eV" }, person.get("mei.tanaka")!);
    expect(isRegistryError(self, "four_eyes")).toBe(true);
    const [{ n: after }] = await t.db.select({ n: count() }).from(revisions);
    expect(after).toBe(before);
  });

  it("creates records once per conditions and retires them with a reason", async () => {
    const [gaas] = await t.db.select().from(materials).where(eq(materials.key, "GaAs"));
    const [eg] = await t.db.select().from(quantities).where(eq(quantities.key, "eg"));
    const sourceId = await v01Source();
    const approval = { proposedBy: person.get("tomas.okafor")!, approvedBy: person.get("hanna.lindqvist")! };
    const created = await t.db.transaction((tx) =>
      createRecordWithRevision(tx, {
        materialId: gaas.id, quantityId: eg.id, conditions: { temperatureK: "4.2", valley: "G" }, ...approval,
        revision: { value: "1.519", unit: "eV", method: "calculated", sourceId, notes: "Varshni at 4.2 K rounds to Eg(0) [V01]" },
      }),
    );
    const [rec] = await t.db.select().from(records).where(eq(records.id, created.recordId));
    expect(rec.conditionKey).toBe("T=4.2|V=G|x=");
    const again = await t.db
      .transaction((tx) =>
        createRecordWithRevision(tx, {
          materialId: gaas.id, quantityId: eg.id, conditions: { temperatureK: "4.200", valley: "G" }, ...approval,
          revision: { value: "1.519", unit: "eV", method: "calculated", sourceId },
        }),
      )
      .catch((e) => e);
    expect(isRegistryError(again, "duplicate") && again.details.recordId).toBe(created.recordId);
    const noValley = await t.db
      .transaction((tx) =>
        createRecordWithRevision(tx, { materialId: gaas.id, quantityId: eg.id, conditions: { temperatureK: "10" }, ...approval, revision: { value: "1.519", unit: "eV", method: "calculated", sourceId } }),
      )
      .catch((e) => e);
    expect(isRegistryError(noValley, "invalid") && noValley.details.fieldErrors?.valley).toBeTruthy();
    const retired = await t.db.transaction((tx) => retireRecord(tx, { recordId: created.recordId, baseRevisionId: created.revisionId, reason: "Duplicate of the 0 K fit.", ...approval }));
    expect(retired.seq).toBe(2);
    const later = await t.db
      .transaction((tx) => appendRevision(tx, { recordId: created.recordId, baseRevisionId: retired.revisionId, ...approval, revision: { value: "1.519", unit: "eV", method: "calculated", sourceId } }))
      .catch((e) => e);
    expect(isRegistryError(later, "retired")).toBe(true);
    const back = await t.db.transaction((tx) =>
      appendRevision(tx, { recordId: created.recordId, baseRevisionId: retired.revisionId, reinstate: true, ...approval, revision: { value: "1.519", unit: "eV", method: "calculated", sourceId } }),
    );
    expect((await getCurrentRevision(t.db, created.recordId))?.id).toBe(back.revisionId);
  });
});

describe("the registry table's queries", () => {
  it("read copies that every write kept in step with the current revision", async () => {
    expect(await copiesOutOfStep(t.db)).toBe(0);
  });

  const activeDemo = DEMO_RECORDS.filter((r) => !r.retire);

  it("filter by material and quantity", async () => {
    const rows = await allRows(view({ material: "GaAs", quantity: "eg" }));
    expect(rows.every((r) => r.materialKey === "GaAs" && r.quantityKey === "eg")).toBe(true);
    expect(rows.length).toBeGreaterThanOrEqual(activeDemo.filter((r) => r.material === "GaAs" && r.quantity === "eg").length);
    expect(rows.map((r) => r.valley)).toContain("X");
  });

  it("filter by family, method and free text", async () => {
    const phosphides = await allRows(view({ family: "phosphides" }));
    expect(new Set(phosphides.map((r) => r.materialKey))).toEqual(new Set(["InP", "GaP"]));
    expect(phosphides).toHaveLength(activeDemo.filter((r) => r.material === "InP" || r.material === "GaP").length);
    const measured = await allRows(view({ method: "measured" }));
    expect(measured.map((r) => [r.materialKey, r.value, r.source?.label])).toEqual([["AlGaAs", "1.838", "KD-EPI-2026-014"]]);
    const byReport = await allRows(view({ q: "KD-EPI" }));
    expect(byReport.map((r) => r.recordId)).toEqual(measured.map((r) => r.recordId));
    const bySzeNg = await allRows(view({ q: "Sze" }));
    expect(new Set(bySzeNg.map((r) => r.source?.label))).toEqual(new Set(["Sze & Ng 2007"]));
    expect(await allRows(view({ q: "100%_nothing" }))).toEqual([]);
  });

  it("page in SQL: every active record once, the total counted, a page past the end clamped", async () => {
    const first = await listRegistry(t.db, view({ size: "25" }));
    const [{ n }] = await t.db.select({ n: count() }).from(records).where(eq(records.status, "active"));
    expect(first.total).toBe(Number(n));
    expect(first.rows).toHaveLength(25);
    const rows = await allRows(view({ size: "25" }));
    expect(rows).toHaveLength(first.total);
    expect(new Set(rows.map((r) => r.recordId)).size).toBe(first.total);
    const past = await listRegistry(t.db, view({ size: "25", page: "999" }));
    expect(past.page).toBe(first.pageCount);
    expect(past.rows.length).toBeGreaterThan(0);
  });

  it("sort by material, by value exactly, and by last change", async () => {
    const byMaterial = await allRows(view({}));
    const keys = byMaterial.map((r) => r.materialKey);
    expect(keys).toEqual([...keys].sort((a, b) => (a.toLowerCase() < b.toLowerCase() ? -1 : a.toLowerCase() > b.toLowerCase() ? 1 : 0)));
    const byValue = await allRows(view({ quantity: "lattice_a", sort: "value", dir: "desc" }));
    for (let i = 1; i < byValue.length; i++) expect(exactDecimal(byValue[i - 1].value!).decimal.gte(exactDecimal(byValue[i].value!).decimal)).toBe(true);
    expect(byValue[0]).toMatchObject({ materialKey: "GaSb", value: "6.0959" }); // [V01]
    const byChange = await allRows(view({ sort: "changed", dir: "desc" }));
    const times = byChange.map((r) => Date.parse(r.changedAt));
    expect([...times].sort((a, b) => b - a)).toEqual(times);
  });

  it("read bad URL values as the defaults", () => {
    expect(view({ sort: "DROP TABLE", page: "-3", size: "7", method: "guessed", material: "GaAs'--" })).toMatchObject({ sort: "material", page: 1, size: 50, method: undefined, material: undefined });
  });
});

describe("sources", () => {
  it("list each source with how often it is cited and the values that cite it", async () => {
    const list = await listSources(t.db, { page: 1, size: 50 });
    const v01 = list.sources.find((s) => s.doi === "10.1063/1.1368156")!;
    expect(v01.kind).toBe("bibtex");
    expect(v01.reference).toBe("I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, Journal of Applied Physics 89, 5815–5875 (2001)");
    expect(v01.values.length).toBe(6);
    expect(v01.currentCount).toBeGreaterThan(40);
    const [{ n }] = await t.db.select({ n: count() }).from(revisions).where(eq(revisions.sourceId, v01.id));
    expect(v01.revisionCount).toBe(Number(n));
    const detail = await loadSource(t.db, v01.id, { page: 1, size: 500 });
    expect(detail?.total).toBe(Number(n));
    expect(detail?.citing.filter((c) => c.state === "current")).toHaveLength(v01.currentCount);
    expect(detail?.citing[0].state).toBe("current");
    expect(await loadSource(t.db, 999_999, { page: 1, size: 10 })).toBeNull();
  });

  it("keep one source per DOI: a BibTeX entry with a known DOI fills in the bare DOI source", async () => {
    const [{ n: before }] = await t.db.select({ n: count() }).from(sources);
    const codata = await ensureSource(t.db, { kind: "doi", doi: "10.1103/RevModPhys.93.025010", title: "ignored, already known" });
    const again = await ensureSource(t.db, {
      kind: "bibtex",
      bibtex: `@article{CODATA2018, author = {Tiesinga, E. and Mohr, P. J. and Newell, D. B. and Taylor, B. N.}, title = {{CODATA} recommended values of the fundamental physical constants: 2018}, journal = {Reviews of Modern Physics}, volume = {93}, pages = {025010}, year = {2021}, doi = {10.1103/RevModPhys.93.025010}}`,
    });
    expect(again).toBe(codata);
    const [row] = await t.db.select().from(sources).where(eq(sources.id, codata));
    expect(row).toMatchObject({ kind: "bibtex", bibtexKey: "CODATA2018", year: 2021 });
    const [{ n: after }] = await t.db.select({ n: count() }).from(sources);
    expect(after).toBe(before);
    const report = await ensureSource(t.db, { kind: "report", reportNumber: "KD-EPI-2026-014", title: "ignored" });
    const [r] = await t.db.select().from(sources).where(eq(sources.id, report));
    expect(r.title).toMatch(/K1423–K1425/);
  });
});

describe("the demo team's approvals", () => {
  it("never let the proposer approve their own revision", async () => {
    const [{ n }] = await t.db.select({ n: count() }).from(revisions).where(sql`${revisions.proposedBy} = ${revisions.approvedBy}`);
    expect(Number(n)).toBe(0);
    const leads = [person.get("ravi.menon"), person.get("hanna.lindqvist")];
    const approvers = await t.db.selectDistinct({ id: revisions.approvedBy }).from(revisions);
    expect(approvers.every((a) => leads.includes(a.id!))).toBe(true);
  });
});

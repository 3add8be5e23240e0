import Decimal from "decimal.js";
import { drizzle } from "drizzle-orm/mysql2";
import type mysql from "mysql2/promise";
import { parseArgs } from "node:util";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { syncQuantities } from "~/.server/registry/catalogue";
import { exactDecimal } from "~/domain/exact-decimal";
import { conditionKey, quantityByKey, type Valley } from "~/domain/quantities";
import { loadTeam } from "./load";
import { TEAM_DOMAIN } from "./team";

// A large synthetic registry for benchmarks only (never the demo): invented materials SYN-…, invented sources,
// values drawn inside each quantity's plausible range. Deterministic for a given seed; written with multi-row INSERTs.

type Slot = { quantity: string; temperatureK: string | null; valley: Valley | null; composition: string | null };

const BINARY_SLOTS: Slot[] = [
  ...(["G", "X", "L"] as const).flatMap((valley) => [null, "4.2", "77", "200", "300", "400"].map((temperatureK) => ({ quantity: "eg", temperatureK, valley, composition: null }))),
  ...(["G", "X", "L"] as const).flatMap((valley) => ["varshni_alpha", "varshni_beta"].map((quantity) => ({ quantity, temperatureK: null, valley, composition: null }))),
  { quantity: "me", temperatureK: null, valley: "G", composition: null },
  { quantity: "me", temperatureK: "300", valley: "G", composition: null },
  ...["luttinger_g1", "luttinger_g2", "luttinger_g3", "lattice_dadt", "delta_so", "ep", "kane_f", "vbo"].map((quantity) => ({ quantity, temperatureK: null, valley: null, composition: null })),
  ...["4.2", "77", "300", "500"].map((temperatureK) => ({ quantity: "lattice_a", temperatureK, valley: null, composition: null })),
];

const COMPOSITIONS = ["0.1", "0.2", "0.3", "0.4", "0.5", "0.6", "0.7", "0.8", "0.9"];
const ALLOY_SLOTS: Slot[] = [
  ...COMPOSITIONS.flatMap((composition) => [null, "300"].map((temperatureK) => ({ quantity: "eg", temperatureK, valley: "G" as Valley, composition }))),
  ...COMPOSITIONS.map((composition) => ({ quantity: "lattice_a", temperatureK: "300", valley: null, composition })),
  ...(["G", "X", "L"] as const).flatMap((valley) => ["eg_bowing_c0", "eg_bowing_c1"].map((quantity) => ({ quantity, temperatureK: null, valley, composition: null }))),
];

const RECORD_COLUMNS = [
  "id", "material_id", "quantity_id", "temperature_k", "valley", "composition", "condition_key", "status", "current_revision_id", "version", "updatedAt",
  "family_id", "sort_material", "quantity_sort", "current_method", "current_value_numeric", "current_source_id",
];

const FAMILY_KEYS = ["arsenides", "phosphides", "antimonides", "nitrides", "group-iv"] as const;
const METHODS = ["measured", "calculated", "fitted", "compilation"] as const;
const DECIMALS: Record<string, number> = { K: 1, "Å/K": 7, "Å": 5, m0: 4, "meV/K": 4 };

// mulberry32: a small deterministic generator, so two runs with one seed build the same registry.
function random(seed: number) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

async function nextId(pool: mysql.Pool, table: string): Promise<number> {
  const [[row]] = (await pool.query(`SELECT COALESCE(MAX(id), 0) + 1 AS next FROM \`${table}\``)) as unknown as [{ next: number | string }[]];
  return Number(row.next);
}

async function insertRows(pool: mysql.Pool, table: string, columns: string[], rows: unknown[][], batch = 2000) {
  for (let i = 0; i < rows.length; i += batch) {
    await pool.query(`INSERT INTO \`${table}\` (${columns.map((c) => `\`${c}\``).join(", ")}) VALUES ?`, [rows.slice(i, i + batch)]);
  }
}

export type SyntheticSummary = { materials: number; sources: number; records: number; revisions: number; retired: number; seconds: number };

/** Fills an empty, migrated database with about `revisions` revisions (exactly that many) over records of invented materials. */
export async function generateSyntheticRegistry(url: string, options: { revisions: number; seed?: number; revisionsPerRecord?: number }): Promise<SyntheticSummary> {
  const started = Date.now();
  const rand = random(options.seed ?? 20260214);
  const pool = createPool(url, 4);
  try {
    const d = drizzle(pool, { schema, mode: "default" });
    const [[{ n }]] = (await pool.query("SELECT COUNT(*) AS n FROM records")) as unknown as [{ n: number }[]];
    if (Number(n) > 0) throw new Error("the database already holds records: give the synthetic registry an empty database of its own");
    await loadTeam(d);
    await syncQuantities(d);
    const [families] = (await pool.query("SELECT id, `key` FROM material_families")) as unknown as [{ id: number; key: string }[]];
    const familyId = new Map(families.map((f) => [f.key, f.id]));
    const [people] = (await pool.query("SELECT id, email FROM users")) as unknown as [{ id: number; email: string }[]];
    const personId = (name: string) => people.find((p) => p.email === `${name}@${TEAM_DOMAIN}`)!.id;
    const proposers = [personId("tomas.okafor"), personId("mei.tanaka")];
    const leadOf: Record<string, number> = {
      arsenides: personId("ravi.menon"), antimonides: personId("ravi.menon"),
      phosphides: personId("hanna.lindqvist"), nitrides: personId("hanna.lindqvist"), "group-iv": personId("hanna.lindqvist"),
    };
    const [qs] = (await pool.query("SELECT id, `key`, canonical_unit AS unit, range_min AS lo, range_max AS hi, sort_order AS sortOrder FROM quantities")) as unknown as [{ id: number; key: string; unit: string; lo: string; hi: string; sortOrder: number }[]];
    const quantity = new Map(qs.map((q) => [q.key, q]));

    const perRecord = options.revisionsPerRecord ?? 3;
    const targetRecords = Math.max(1, Math.ceil(options.revisions / perRecord));
    const sourceCount = Math.max(10, Math.min(400, Math.ceil(targetRecords / 100)));
    const firstSource = await nextId(pool, "sources");
    const sourceRows: unknown[][] = [];
    for (let i = 1; i <= sourceCount; i++) {
      const code = String(i).padStart(5, "0");
      const year = 1990 + Math.floor(rand() * 36);
      if (i % 3 === 0) sourceRows.push([firstSource + i - 1, "report", null, `SYN-RPT-${code}`, `Synthetic internal report ${code}`, "Synthetic Author", year]);
      else sourceRows.push([firstSource + i - 1, "doi", `10.5555/synthetic.${code}`, null, `Synthetic band-parameter study ${code}`, `A. Synthetic${code}, B. Example, C. Sample`, year]);
    }
    await insertRows(pool, "sources", ["id", "kind", "doi", "report_number", "title", "authors", "year"], sourceRows);

    const firstMaterial = await nextId(pool, "materials");
    const materialRows: unknown[][] = [];
    const slotsOf: { id: number; key: string; family: string; slots: Slot[] }[] = [];
    let planned = 0;
    for (let i = 0; planned < targetRecords; i++) {
      const id = firstMaterial + i;
      const alloy = i % 5 === 4;
      const family = FAMILY_KEYS[i % FAMILY_KEYS.length];
      const code = String(i + 1).padStart(5, "0");
      const structure = family === "nitrides" ? "wurtzite" : family === "group-iv" ? "diamond" : "zinc_blende";
      materialRows.push([
        id, `SYN-${code}`, `Synthetic ${alloy ? "alloy" : "compound"} ${code}`, alloy ? `Syn${code}(x)` : `Syn${code}`, alloy ? "alloy" : family === "group-iv" ? "element" : "binary",
        structure, familyId.get(family), alloy ? "x" : null, alloy ? id - 2 : null, alloy ? id - 1 : null,
      ]);
      const slots = (alloy ? ALLOY_SLOTS : BINARY_SLOTS).slice(0, targetRecords - planned);
      planned += slots.length;
      slotsOf.push({ id, key: `SYN-${code}`, family, slots });
    }
    await insertRows(pool, "materials", ["id", "key", "name", "formula", "kind", "structure", "family_id", "composition_variable", "end_member_a_id", "end_member_b_id"], materialRows);

    const firstRecord = await nextId(pool, "records");
    const firstRevision = await nextId(pool, "revisions");
    const counts: number[] = [];
    for (let i = 0; i < planned; i++) counts.push(1 + Math.floor(rand() * (2 * perRecord - 1)));
    let excess = counts.reduce((a, b) => a + b, 0) - options.revisions;
    for (let i = 0; excess !== 0; i = (i + 1) % counts.length) {
      if (excess > 0 && counts[i] > 1) {
        counts[i]--;
        excess--;
      } else if (excess < 0) {
        counts[i]++;
        excess++;
      }
    }
    const recordRows: unknown[][] = [];
    let revisionRows: unknown[][] = [];
    const revisionColumns = ["id", "record_id", "seq", "kind", "value", "value_numeric", "significant_digits", "input_value", "input_unit", "uncertainty", "method", "source_id", "locator", "notes", "proposed_by", "approved_by", "proposed_at", "approved_at"];
    const startTime = Date.parse("2024-03-01T09:00:00Z");
    const spanMs = 700 * 86_400_000;
    let recordId = firstRecord;
    let revisionId = firstRevision;
    let retired = 0;
    let index = 0;
    for (const m of slotsOf) {
      for (const slot of m.slots) {
        const q = quantity.get(slot.quantity)!;
        const dp = DECIMALS[q.unit] ?? 4;
        const lo = new Decimal(q.lo);
        const span = new Decimal(q.hi).minus(lo);
        const n = counts[index++];
        const retire = n >= 2 && rand() < 0.02;
        let when = startTime + Math.floor(rand() * spanMs * 0.5);
        let current: { method: string | null; value: string | null; sourceId: number | null } = { method: null, value: null, sourceId: null };
        for (let seq = 1; seq <= n; seq++) {
          when += Math.floor(rand() * (spanMs / (2 * n)));
          const proposedAt = new Date(when - 86_400_000);
          const approvedAt = new Date(when);
          const isRetirement = retire && seq === n;
          const value = isRetirement ? null : lo.plus(span.times(0.05 + rand() * 0.9)).toFixed(dp);
          const sourceId = firstSource + Math.floor(rand() * sourceCount);
          const method = isRetirement ? null : METHODS[Math.floor(rand() * METHODS.length)];
          current = { method, value, sourceId: isRetirement ? null : sourceId };
          revisionRows.push([
            revisionId, recordId, seq, isRetirement ? "retirement" : "value", value, value, value ? exactDecimal(value).significantDigits : null,
            value, isRetirement ? null : q.unit, isRetirement ? null : (rand() < 0.3 ? new Decimal(q.hi).minus(lo).times(0.001).toFixed(dp) : null),
            method, isRetirement ? null : sourceId, isRetirement ? null : `Table ${1 + Math.floor(rand() * 9)}`,
            isRetirement ? "Retired in the synthetic history." : null, proposers[Math.floor(rand() * 2)], leadOf[m.family], proposedAt, approvedAt,
          ]);
          if (revisionRows.length >= 5000) {
            await insertRows(pool, "revisions", revisionColumns, revisionRows);
            revisionRows = [];
          }
          if (seq < n) revisionId++;
        }
        if (retire) retired++;
        recordRows.push([
          recordId, m.id, q.id, slot.temperatureK, slot.valley, slot.composition, conditionKey(quantityByKey(slot.quantity)!, slot), retire ? "retired" : "active", revisionId, n,
          new Date(when), familyId.get(m.family), m.key, q.sortOrder, current.method, current.value, current.sourceId,
        ]);
        recordId++;
        revisionId++;
        if (recordRows.length >= 5000) {
          await insertRows(pool, "records", RECORD_COLUMNS, recordRows.splice(0));
        }
      }
    }
    await insertRows(pool, "revisions", revisionColumns, revisionRows);
    await insertRows(pool, "records", RECORD_COLUMNS, recordRows);
    await pool.query("ANALYZE TABLE records, revisions, materials, sources, quantities");
    return { materials: materialRows.length, sources: sourceCount, records: planned, revisions: options.revisions, retired, seconds: (Date.now() - started) / 1000 };
  } finally {
    await pool.end();
  }
}

async function main() {
  const { values } = parseArgs({ options: { revisions: { type: "string", default: "100000" }, "database-url": { type: "string" }, seed: { type: "string" } } });
  const url = values["database-url"] ?? process.env.DATABASE_URL;
  if (!url) throw new Error("give --database-url mysql://… (an empty, migrated database of its own)");
  const revisions = Number.parseInt(values.revisions!, 10);
  if (!(revisions > 0)) throw new Error("--revisions must be a positive whole number");
  const summary = await generateSyntheticRegistry(url, { revisions, seed: values.seed ? Number.parseInt(values.seed, 10) : undefined });
  console.log(`synthetic registry: ${summary.materials} materials, ${summary.sources} sources, ${summary.records} records (${summary.retired} retired), ${summary.revisions} revisions in ${summary.seconds.toFixed(1)} s`);
}

if (import.meta.url === `file://${process.argv[1]}`) await main();

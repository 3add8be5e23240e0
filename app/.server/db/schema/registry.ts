import { sql } from "drizzle-orm";
import {
  boolean, datetime, decimal, index, int, json, mysqlEnum, mysqlTable, text, uniqueIndex, varchar,
} from "drizzle-orm/mysql-core";

const now = () => datetime({ fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`);

export const STRUCTURES = ["diamond", "zinc_blende", "wurtzite"] as const;
export const MATERIAL_KINDS = ["element", "binary", "alloy"] as const;
export const VALLEYS = ["G", "X", "L"] as const;
export const METHODS = ["measured", "calculated", "fitted", "compilation"] as const;
export const SOURCE_KINDS = ["doi", "bibtex", "report"] as const;

export const materials = mysqlTable("materials", {
  id: int().primaryKey().autoincrement(),
  key: varchar({ length: 40 }).notNull(),
  name: varchar({ length: 120 }).notNull(),
  formula: varchar({ length: 60 }).notNull(),
  kind: mysqlEnum(MATERIAL_KINDS).notNull(),
  structure: mysqlEnum(STRUCTURES).notNull(),
  familyId: int("family_id").notNull(),
  // Alloys: x is the fraction of end member A, e.g. Al(x)Ga(1-x)As has A = AlAs, B = GaAs.
  compositionVariable: varchar("composition_variable", { length: 8 }),
  endMemberAId: int("end_member_a_id"),
  endMemberBId: int("end_member_b_id"),
  description: text(),
  createdAt: now(),
}, (t) => [uniqueIndex("materials_key").on(t.key), index("materials_family").on(t.familyId)]);

export type AcceptedUnit = { unit: string; factor: string };

export const quantities = mysqlTable("quantities", {
  id: int().primaryKey().autoincrement(),
  key: varchar({ length: 64 }).notNull(),
  symbol: varchar({ length: 40 }).notNull(),
  name: varchar({ length: 120 }).notNull(),
  canonicalUnit: varchar("canonical_unit", { length: 20 }).notNull(),
  // Exact factors (decimal strings): canonical = input × factor.
  acceptedUnits: json("accepted_units").$type<AcceptedUnit[]>().notNull(),
  rangeMin: varchar("range_min", { length: 40 }),
  rangeMax: varchar("range_max", { length: 40 }),
  description: text().notNull(),
  dependsOnTemperature: boolean("depends_on_temperature").notNull().default(false),
  dependsOnValley: boolean("depends_on_valley").notNull().default(false),
  dependsOnComposition: boolean("depends_on_composition").notNull().default(false),
  // Tolerance of the consistency checks in the canonical unit; an admin may change it.
  checkTolerance: varchar("check_tolerance", { length: 40 }),
  sortOrder: int("sort_order").notNull().default(0),
}, (t) => [uniqueIndex("quantities_key").on(t.key)]);

export const sources = mysqlTable("sources", {
  id: int().primaryKey().autoincrement(),
  kind: mysqlEnum(SOURCE_KINDS).notNull(),
  doi: varchar({ length: 255 }),
  bibtexKey: varchar("bibtex_key", { length: 120 }),
  bibtex: text(),
  csl: json().$type<Record<string, unknown>>(),
  reportNumber: varchar("report_number", { length: 80 }),
  title: varchar({ length: 500 }).notNull(),
  authors: varchar({ length: 500 }),
  year: int(),
  createdBy: int("created_by"),
  createdAt: now(),
}, (t) => [uniqueIndex("sources_doi").on(t.doi), uniqueIndex("sources_report").on(t.reportNumber), index("sources_bibkey").on(t.bibtexKey)]);

export const records = mysqlTable("records", {
  id: int().primaryKey().autoincrement(),
  materialId: int("material_id").notNull(),
  quantityId: int("quantity_id").notNull(),
  // Null temperature: a 0 K fit parameter or a temperature-independent quantity.
  temperatureK: decimal("temperature_k", { precision: 9, scale: 3 }),
  valley: mysqlEnum(VALLEYS),
  composition: decimal({ precision: 7, scale: 5 }),
  // Normalised conditions, so one quantity of one material is kept once per conditions.
  conditionKey: varchar("condition_key", { length: 80 }).notNull(),
  status: mysqlEnum(["active", "retired"]).notNull().default("active"),
  currentRevisionId: int("current_revision_id"),
  version: int().notNull().default(1),
  createdAt: now(),
  updatedAt: now(),
  // Copies kept by the registry services so the registry table filters, sorts and counts on this table alone:
  // of the material (family, key) and quantity (sort order), and of the current revision (method, value, source).
  familyId: int("family_id"),
  sortMaterial: varchar("sort_material", { length: 40 }).notNull().default(""),
  quantitySort: int("quantity_sort").notNull().default(0),
  currentMethod: mysqlEnum("current_method", METHODS),
  currentValueNumeric: decimal("current_value_numeric", { precision: 40, scale: 20 }),
  currentSourceId: int("current_source_id"),
}, (t) => [
  uniqueIndex("records_conditions").on(t.materialId, t.quantityId, t.conditionKey),
  index("records_quantity").on(t.quantityId),
  index("records_updated").on(t.updatedAt),
  // The registry's orders: material, quantity, then valley (Γ, X, L), composition and temperature.
  index("records_listing_order").on(t.status, t.sortMaterial, t.quantitySort, t.valley, t.composition, t.temperatureK),
  index("records_family_order").on(t.familyId, t.status, t.sortMaterial, t.quantitySort, t.valley, t.composition, t.temperatureK),
  index("records_quantity_value").on(t.quantityId, t.status, t.currentValueNumeric),
  index("records_quantity_order").on(t.quantityId, t.status, t.sortMaterial, t.valley, t.composition, t.temperatureK),
  index("records_temperature_order").on(t.status, t.temperatureK, t.sortMaterial, t.quantitySort, t.valley, t.composition),
  index("records_source").on(t.currentSourceId),
  // Keyset pages of the API (id order after a cursor, InnoDB appends the id to every secondary index) and the
  // registry's value sort within a family: each reads in index order and stops at the page.
  index("records_family_keyset").on(t.familyId, t.status),
  index("records_material_keyset").on(t.materialId, t.status),
  index("records_status_keyset").on(t.status),
  index("records_family_value").on(t.familyId, t.status, t.currentValueNumeric),
]);

export type PotentialCoefficient = { n: number; valueEv: string };

// Immutable: triggers reject UPDATE and DELETE. Superseded/current/retired is derived from records.
export const revisions = mysqlTable("revisions", {
  id: int().primaryKey().autoincrement(),
  recordId: int("record_id").notNull(),
  seq: int().notNull(),
  kind: mysqlEnum(["value", "retirement"]).notNull().default("value"),
  // Exact decimal string in the canonical unit, and its numeric copy for sorting and range filters.
  value: varchar({ length: 64 }),
  valueNumeric: decimal("value_numeric", { precision: 40, scale: 20 }),
  significantDigits: int("significant_digits"),
  inputValue: varchar("input_value", { length: 64 }),
  inputUnit: varchar("input_unit", { length: 20 }),
  uncertainty: varchar({ length: 64 }),
  method: mysqlEnum(METHODS),
  sourceId: int("source_id"),
  locator: varchar({ length: 200 }),
  notes: text(),
  potentialCoefficients: json("potential_coefficients").$type<PotentialCoefficient[]>(),
  periodAngstrom: varchar("period_angstrom", { length: 40 }),
  validFromK: varchar("valid_from_k", { length: 20 }),
  validToK: varchar("valid_to_k", { length: 20 }),
  proposedBy: int("proposed_by"),
  approvedBy: int("approved_by"),
  proposalId: int("proposal_id"),
  proposedAt: datetime("proposed_at", { fsp: 3 }),
  approvedAt: datetime("approved_at", { fsp: 3 }),
  createdAt: now(),
}, (t) => [
  uniqueIndex("revisions_record_seq").on(t.recordId, t.seq),
  index("revisions_source").on(t.sourceId),
]);

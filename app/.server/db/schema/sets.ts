import { sql } from "drizzle-orm";
import { datetime, index, int, longtext, mysqlTable, primaryKey, text, uniqueIndex, varchar } from "drizzle-orm/mysql-core";

const now = () => datetime({ fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`);

export const parameterSets = mysqlTable("parameter_sets", {
  id: int().primaryKey().autoincrement(),
  slug: varchar({ length: 80 }).notNull(),
  name: varchar({ length: 120 }).notNull(),
  purpose: varchar({ length: 200 }).notNull(),
  description: text(),
  createdBy: int("created_by").notNull(),
  createdAt: now(),
  version: int().notNull().default(1),
}, (t) => [uniqueIndex("parameter_sets_slug").on(t.slug)]);

export const setMembers = mysqlTable("set_members", {
  setId: int("set_id").notNull(),
  recordId: int("record_id").notNull(),
  addedBy: int("added_by").notNull(),
  addedAt: now(),
}, (t) => [primaryKey({ columns: [t.setId, t.recordId] })]);

// Frozen: triggers reject UPDATE and DELETE. The canonical bytes are kept as served.
export const releases = mysqlTable("releases", {
  id: int().primaryKey().autoincrement(),
  setId: int("set_id").notNull(),
  number: int().notNull(),
  sha256: varchar({ length: 64 }).notNull(),
  canonicalJson: longtext("canonical_json").notNull(),
  csv: longtext().notNull(),
  csvSha256: varchar("csv_sha256", { length: 64 }).notNull(),
  itemCount: int("item_count").notNull(),
  codataEdition: varchar("codata_edition", { length: 40 }).notNull(),
  softwareVersion: varchar("software_version", { length: 40 }).notNull(),
  frozenBy: int("frozen_by").notNull(),
  frozenAt: datetime("frozen_at", { fsp: 3 }).notNull(),
}, (t) => [uniqueIndex("releases_set_number").on(t.setId, t.number), index("releases_hash").on(t.sha256)]);

export const releaseItems = mysqlTable("release_items", {
  releaseId: int("release_id").notNull(),
  recordId: int("record_id").notNull(),
  revisionId: int("revision_id").notNull(),
}, (t) => [primaryKey({ columns: [t.releaseId, t.recordId] })]);

export const setWatches = mysqlTable("set_watches", {
  setId: int("set_id").notNull(),
  userId: int("user_id").notNull(),
  createdAt: now(),
}, (t) => [primaryKey({ columns: [t.setId, t.userId] })]);

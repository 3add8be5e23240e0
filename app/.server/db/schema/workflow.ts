import { sql } from "drizzle-orm";
import { bigint, datetime, index, int, json, mysqlEnum, mysqlTable, text, varchar } from "drizzle-orm/mysql-core";

const now = () => datetime({ fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`);

export const PROPOSAL_KINDS = ["new_record", "revision", "retirement"] as const;
export const PROPOSAL_STATES = ["draft", "submitted", "approved", "rejected", "withdrawn"] as const;

export const proposals = mysqlTable("proposals", {
  id: int().primaryKey().autoincrement(),
  kind: mysqlEnum(PROPOSAL_KINDS).notNull(),
  state: mysqlEnum(PROPOSAL_STATES).notNull().default("draft"),
  authorId: int("author_id").notNull(),
  recordId: int("record_id"),
  baseRevisionId: int("base_revision_id"),
  materialId: int("material_id"),
  quantityId: int("quantity_id"),
  // Everything as typed, so nothing is lost whatever the form's state.
  payload: json().$type<Record<string, unknown>>().notNull(),
  proposedValue: varchar("proposed_value", { length: 64 }),
  proposedUnit: varchar("proposed_unit", { length: 20 }),
  checkStatus: varchar("check_status", { length: 16 }),
  batchId: int("batch_id"),
  decidedBy: int("decided_by"),
  decidedAt: datetime("decided_at", { fsp: 3 }),
  reason: text(),
  resultRevisionId: int("result_revision_id"),
  version: int().notNull().default(1),
  createdAt: now(),
  updatedAt: now(),
  submittedAt: datetime("submitted_at", { fsp: 3 }),
}, (t) => [index("proposals_state").on(t.state, t.submittedAt), index("proposals_author").on(t.authorId), index("proposals_record").on(t.recordId)]);

export const proposalComments = mysqlTable("proposal_comments", {
  id: int().primaryKey().autoincrement(),
  proposalId: int("proposal_id").notNull(),
  authorId: int("author_id").notNull(),
  body: text().notNull(),
  createdAt: now(),
}, (t) => [index("proposal_comments_proposal").on(t.proposalId)]);

export const attachments = mysqlTable("attachments", {
  id: int().primaryKey().autoincrement(),
  proposalId: int("proposal_id"),
  batchId: int("batch_id"),
  sha256: varchar({ length: 64 }).notNull(),
  fileName: varchar("file_name", { length: 255 }).notNull(),
  contentType: varchar("content_type", { length: 100 }).notNull(),
  sizeBytes: int("size_bytes").notNull(),
  uploadedBy: int("uploaded_by").notNull(),
  createdAt: now(),
}, (t) => [index("attachments_proposal").on(t.proposalId)]);

export const csvBatches = mysqlTable("csv_batches", {
  id: int().primaryKey().autoincrement(),
  authorId: int("author_id").notNull(),
  fileName: varchar("file_name", { length: 255 }).notNull(),
  sha256: varchar({ length: 64 }).notNull(),
  rowCount: int("row_count").notNull(),
  createdAt: now(),
});

// Notices waiting for a daily digest (immediate ones are sent at once and recorded here too).
export const notices = mysqlTable("notices", {
  id: bigint({ mode: "number" }).primaryKey().autoincrement(),
  userId: int("user_id").notNull(),
  kind: varchar({ length: 40 }).notNull(),
  subject: varchar({ length: 200 }).notNull(),
  bodyText: text("body_text").notNull(),
  link: varchar({ length: 300 }),
  createdAt: now(),
  sentAt: datetime("sent_at", { fsp: 3 }),
}, (t) => [index("notices_pending").on(t.userId, t.sentAt)]);

// What a browser had typed when its session ran out, kept until its person signs in again (short-lived; the
// browser holds only a signed cookie with the random key, whose SHA-256 is the id here).
export const draftStashes = mysqlTable("draft_stashes", {
  id: varchar({ length: 64 }).primaryKey(),
  proposalId: int("proposal_id"),
  payload: json().$type<Record<string, unknown>>().notNull(),
  // The client address that posted it: anonymous writes are limited per address.
  ip: varchar({ length: 64 }).notNull().default(""),
  createdAt: now(),
  expiresAt: datetime("expires_at", { fsp: 3 }).notNull(),
}, (t) => [index("draft_stashes_expires").on(t.expiresAt), index("draft_stashes_ip").on(t.ip, t.expiresAt)]);

import { sql } from "drizzle-orm";
import {
  bigint, boolean, datetime, index, int, json, mysqlEnum, mysqlTable, primaryKey, text, uniqueIndex, varchar,
} from "drizzle-orm/mysql-core";

export const ROLES = ["reader", "contributor", "lead", "admin"] as const;
export type Role = (typeof ROLES)[number];

const now = () => datetime({ fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`);

export const users = mysqlTable("users", {
  id: int().primaryKey().autoincrement(),
  email: varchar({ length: 254 }).notNull(),
  name: varchar({ length: 120 }).notNull(),
  role: mysqlEnum(ROLES).notNull().default("reader"),
  active: boolean().notNull().default(true),
  notifyMode: mysqlEnum("notify_mode", ["immediate", "digest"]).notNull().default("immediate"),
  invitedBy: int("invited_by"),
  createdAt: now(),
  lastSignInAt: datetime("last_sign_in_at", { fsp: 3 }),
  version: int().notNull().default(1),
}, (t) => [uniqueIndex("users_email").on(t.email)]);

export const materialFamilies = mysqlTable("material_families", {
  id: int().primaryKey().autoincrement(),
  key: varchar({ length: 40 }).notNull(),
  name: varchar({ length: 120 }).notNull(),
  description: text(),
  createdAt: now(),
}, (t) => [uniqueIndex("material_families_key").on(t.key)]);

export const familyLeads = mysqlTable("family_leads", {
  userId: int("user_id").notNull(),
  familyId: int("family_id").notNull(),
  assignedBy: int("assigned_by"),
  createdAt: now(),
}, (t) => [primaryKey({ columns: [t.userId, t.familyId] }), index("family_leads_family").on(t.familyId)]);

// Append-only: triggers in a migration reject UPDATE and DELETE.
export const auditLog = mysqlTable("audit_log", {
  id: bigint({ mode: "number" }).primaryKey().autoincrement(),
  at: datetime({ fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`),
  actorId: int("actor_id"),
  actorEmail: varchar("actor_email", { length: 254 }),
  action: varchar({ length: 64 }).notNull(),
  targetType: varchar("target_type", { length: 40 }),
  targetId: varchar("target_id", { length: 64 }),
  ip: varchar({ length: 64 }),
  detail: json().$type<Record<string, unknown>>(),
}, (t) => [index("audit_at").on(t.at), index("audit_action").on(t.action, t.at), index("audit_actor").on(t.actorId, t.at)]);

export const apiTokens = mysqlTable("api_tokens", {
  id: int().primaryKey().autoincrement(),
  userId: int("user_id").notNull(),
  name: varchar({ length: 80 }).notNull(),
  tokenHash: varchar("token_hash", { length: 64 }).notNull(),
  prefix: varchar({ length: 16 }).notNull(),
  createdAt: now(),
  lastUsedAt: datetime("last_used_at", { fsp: 3 }),
  revokedAt: datetime("revoked_at", { fsp: 3 }),
}, (t) => [uniqueIndex("api_tokens_hash").on(t.tokenHash), index("api_tokens_user").on(t.userId)]);

// Sign-in code requests, kept for rate limiting by address and by client.
export const signInRequests = mysqlTable("sign_in_requests", {
  id: bigint({ mode: "number" }).primaryKey().autoincrement(),
  email: varchar({ length: 254 }).notNull(),
  ip: varchar({ length: 64 }).notNull(),
  at: datetime({ fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`),
}, (t) => [index("sign_in_requests_email").on(t.email, t.at), index("sign_in_requests_ip").on(t.ip, t.at)]);

// One row per code issued: the server's own record of whom it was sent to, how many tries it has had and
// whether it has signed someone in. The strategy's _totp cookie is unsigned; this row is what we trust.
export const signInCodes = mysqlTable("sign_in_codes", {
  digest: varchar({ length: 64 }).notNull().primaryKey(),
  email: varchar({ length: 254 }).notNull(),
  tries: int().notNull().default(0),
  requestedAt: datetime("requested_at", { fsp: 3 }).notNull().default(sql`CURRENT_TIMESTAMP(3)`),
  expiresAt: datetime("expires_at", { fsp: 3 }).notNull(),
  usedAt: datetime("used_at", { fsp: 3 }),
}, (t) => [index("sign_in_codes_expires").on(t.expiresAt)]);

// Generic fixed-window counters (API rate limits and the like).
export const rateCounters = mysqlTable("rate_counters", {
  bucket: varchar({ length: 160 }).notNull().primaryKey(),
  windowStart: datetime("window_start", { fsp: 3 }).notNull(),
  count: int().notNull().default(0),
});

import { and, count, desc, eq, gte, inArray, lt, sql, type SQL } from "drizzle-orm";
import { clientAddress } from "./auth/client-address";
import { db } from "./db/client";
import { auditLog, users } from "./db/schema";

// Who acted: a signed-in user, an address that asked for a code (id null), or the system (null).
export type AuditActor = { id: number | null; email: string | null } | null;
export type AuditTarget = { type: string; id: string | number } | null;

// Actions are "area.verb"; the admin page lists whatever has been written, so new areas need no registration.
export async function audit(
  actor: AuditActor,
  action: string,
  target: AuditTarget,
  request: Request | null,
  detail?: Record<string, unknown>,
): Promise<void> {
  await db().insert(auditLog).values(rowOf(actor, action, target, request, detail));
}

type Pending = { row: typeof auditLog.$inferInsert; done: (error?: unknown) => void };
let queue: Pending[] = [];
let flushing: Promise<void> | null = null;

function rowOf(actor: AuditActor, action: string, target: AuditTarget, request: Request | null, detail?: Record<string, unknown>): typeof auditLog.$inferInsert {
  return {
    actorId: actor?.id ?? null,
    actorEmail: actor?.email ?? null,
    action,
    targetType: target?.type ?? null,
    targetId: target ? String(target.id) : null,
    ip: request ? clientAddress(request) : null,
    detail: detail ?? null,
  };
}

async function flush(): Promise<void> {
  while (queue.length) {
    const batch = queue;
    queue = [];
    try {
      await db().insert(auditLog).values(batch.map((p) => p.row));
      for (const p of batch) p.done();
    } catch (e) {
      for (const p of batch) p.done(e);
    }
  }
  flushing = null;
}

/**
 * The same entry as audit(), for hot read paths (downloads by token): it resolves once its row is committed, but
 * entries that arrive while one INSERT is under way share the next one, so many readers cost one commit.
 */
export function auditInBatch(actor: AuditActor, action: string, target: AuditTarget, request: Request | null, detail?: Record<string, unknown>): Promise<void> {
  return new Promise<void>((resolve, reject) => {
    queue.push({ row: rowOf(actor, action, target, request, detail), done: (error) => (error === undefined ? resolve() : reject(error)) });
    flushing ??= flush();
  });
}

/**
 * Action strings written before our own words replaced borrowed ones. The log is append-only, so old rows keep
 * them; the admin page shows them, and filters them, under the name written now.
 */
export const AUDIT_ACTION_LABELS: Readonly<Record<string, string>> = {
  "proposal.rebase": "proposal.carry_forward",
  "proposal.comment": "proposal.remark",
  "set.watched": "set.notices_on",
  "set.unwatched": "set.notices_off",
};

/** The name an action is shown and filtered under. */
export function auditActionLabel(action: string): string {
  return AUDIT_ACTION_LABELS[action] ?? action;
}

/** Every stored action string shown under this name: the name itself and the older ones it replaced. */
function storedActionsOf(label: string): string[] {
  return [label, ...Object.entries(AUDIT_ACTION_LABELS).filter(([, to]) => to === label).map(([from]) => from)];
}

export type AuditFilter = { action?: string; actorId?: number; from?: Date; to?: Date; page: number; pageSize: number };

export type AuditRow = {
  id: number; at: Date; actorId: number | null; actorEmail: string | null; actorName: string | null;
  action: string; targetType: string | null; targetId: string | null; ip: string | null; detail: Record<string, unknown> | null;
};

export async function listAudit(filter: AuditFilter): Promise<{ rows: AuditRow[]; total: number; page: number; pageCount: number }> {
  const where: SQL[] = [];
  if (filter.action) where.push(inArray(auditLog.action, storedActionsOf(auditActionLabel(filter.action))));
  if (filter.actorId) where.push(eq(auditLog.actorId, filter.actorId));
  if (filter.from) where.push(gte(auditLog.at, filter.from));
  if (filter.to) where.push(lt(auditLog.at, filter.to));
  const condition = where.length ? and(...where) : undefined;
  const [{ n }] = await db().select({ n: count() }).from(auditLog).where(condition);
  const total = Number(n);
  const pageCount = Math.max(1, Math.ceil(total / filter.pageSize));
  const page = Math.min(Math.max(1, filter.page), pageCount);
  const rows = await db()
    .select({
      id: auditLog.id, at: auditLog.at, actorId: auditLog.actorId, actorEmail: auditLog.actorEmail, actorName: users.name,
      action: auditLog.action, targetType: auditLog.targetType, targetId: auditLog.targetId, ip: auditLog.ip, detail: auditLog.detail,
    })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorId))
    .where(condition)
    .orderBy(desc(auditLog.at), desc(auditLog.id))
    .limit(filter.pageSize)
    .offset((page - 1) * filter.pageSize);
  return { rows: rows.map((r) => ({ ...r, id: Number(r.id), action: auditActionLabel(r.action) })), total, page, pageCount };
}

export async function auditActions(): Promise<string[]> {
  const rows = await db().selectDistinct({ action: auditLog.action }).from(auditLog).orderBy(auditLog.action);
  return [...new Set(rows.map((r) => auditActionLabel(r.action)))].sort();
}

export async function auditActors(): Promise<{ id: number; name: string; email: string }[]> {
  return db()
    .select({ id: users.id, name: users.name, email: users.email })
    .from(users)
    .where(sql`exists (select 1 from ${auditLog} where ${auditLog.actorId} = ${users.id})`)
    .orderBy(users.name);
}

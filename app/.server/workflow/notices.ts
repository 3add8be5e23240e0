import { and, asc, eq, inArray, isNull, sql } from "drizzle-orm";
import { db } from "../db/client";
import { notices, users } from "../db/schema";
import { env } from "../env";
import { sendMail } from "../mail/send";
import type { Executor } from "../registry/executor";
import { digestMail, noticeMail, type NoticeContent } from "./notice-templates";

/** The address of a page in e-mailed links. */
export function publicLink(pathname: string): string {
  return new URL(pathname, env().BANDLEDGER_PUBLIC_URL).toString();
}

/**
 * Writes one notice per person (each once), inside the caller's transaction: the notice exists exactly when the
 * event that caused it was committed, so a decision that lost its race leaves none behind.
 */
export async function queueNotices(ex: Executor, userIds: number[], content: NoticeContent): Promise<number[]> {
  const unique = [...new Set(userIds)];
  if (unique.length === 0) return [];
  // One INSERT per person: a multi-row INSERT reports only its first id, and on a Galera cluster the others are not
  // first + 1, first + 2 (auto-increment steps by the cluster size), so they cannot be derived from it.
  const ids: number[] = [];
  for (const userId of unique) {
    const [{ id }] = await ex.insert(notices).values({ userId, kind: content.kind, subject: content.subject, bodyText: content.bodyText, link: content.link }).$returningId();
    ids.push(Number(id));
  }
  return ids;
}

/**
 * Mails the notices of people who chose immediate notices, each once: the row is locked while it is sent and
 * marked sent in the same transaction. A notice whose mail fails stays waiting, and the next digest carries it.
 */
export async function deliverImmediate(ids: number[]): Promise<{ sent: number; failed: number }> {
  let sent = 0;
  let failed = 0;
  for (const id of ids) {
    try {
      const done = await db().transaction(async (tx) => {
        const [row] = await tx
          .select({ notice: notices, email: users.email, name: users.name, mode: users.notifyMode, active: users.active })
          .from(notices)
          .innerJoin(users, eq(users.id, notices.userId))
          .where(and(eq(notices.id, id), isNull(notices.sentAt)))
          .for("update");
        if (!row || row.mode !== "immediate" || !row.active) return false;
        await sendMail(noticeMail({ email: row.email, name: row.name }, { subject: row.notice.subject, bodyText: row.notice.bodyText, link: row.notice.link ?? env().BANDLEDGER_PUBLIC_URL }, env().BANDLEDGER_PUBLIC_URL));
        await tx.update(notices).set({ sentAt: sql`NOW(3)` }).where(eq(notices.id, id));
        return true;
      });
      if (done) sent++;
    } catch (e) {
      failed++;
      console.error(`bandledger: notice ${id} could not be mailed, it waits for the next digest: ${(e as Error).message}`);
    }
  }
  return { sent, failed };
}

export type DigestRun = { people: number; notices: number; failed: number };

/**
 * Sends one digest per person with waiting notices (those who chose the digest, and any immediate notice whose
 * mail failed) and marks them sent. Rows are locked while their digest is sent, so two runs never send one twice.
 */
export async function sendDigests(): Promise<DigestRun> {
  const waiting = await db()
    .selectDistinct({ userId: notices.userId })
    .from(notices)
    .innerJoin(users, eq(users.id, notices.userId))
    .where(and(isNull(notices.sentAt), eq(users.active, true)));
  const run: DigestRun = { people: 0, notices: 0, failed: 0 };
  for (const { userId } of waiting) {
    try {
      const count = await db().transaction(async (tx) => {
        const rows = await tx
          .select({ notice: notices, email: users.email, name: users.name })
          .from(notices)
          .innerJoin(users, eq(users.id, notices.userId))
          .where(and(eq(notices.userId, userId), isNull(notices.sentAt)))
          .orderBy(asc(notices.id))
          .for("update");
        if (rows.length === 0) return 0;
        const items = rows.map((r) => ({ kind: r.notice.kind, subject: r.notice.subject, bodyText: r.notice.bodyText, link: r.notice.link ?? env().BANDLEDGER_PUBLIC_URL }));
        await sendMail(digestMail({ email: rows[0].email, name: rows[0].name }, items, env().BANDLEDGER_PUBLIC_URL));
        await tx.update(notices).set({ sentAt: sql`NOW(3)` }).where(inArray(notices.id, rows.map((r) => r.notice.id)));
        return rows.length;
      });
      if (count > 0) {
        run.people++;
        run.notices += count;
      }
    } catch (e) {
      run.failed++;
      console.error(`bandledger: the digest of user ${userId} could not be sent; its notices keep waiting: ${(e as Error).message}`);
    }
  }
  return run;
}

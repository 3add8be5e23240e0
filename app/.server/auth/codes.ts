import { and, eq, lt, sql } from "drizzle-orm";
import { db } from "../db/client";
import { signInCodes } from "../db/schema";
import { CODE_MAX_WRONG_TRIES, CODE_PERIOD_SECONDS } from "./totp-strategy";

export type IssuedCode = { digest: string; email: string; tries: number; expired: boolean; used: boolean };

// The server's record of each code: the _totp cookie is unsigned, so address, tries and use are kept here.
export async function recordIssuedCode(digest: string, email: string): Promise<void> {
  await db().insert(signInCodes).values({ digest, email, expiresAt: sql`NOW(3) + INTERVAL ${CODE_PERIOD_SECONDS} SECOND` });
  if (Math.random() < 0.02) await db().delete(signInCodes).where(lt(signInCodes.expiresAt, sql`NOW(3) - INTERVAL 1 DAY`));
}

export async function loadIssuedCode(digest: string): Promise<IssuedCode | null> {
  const [row] = await db()
    .select({
      digest: signInCodes.digest,
      email: signInCodes.email,
      tries: signInCodes.tries,
      expired: sql<number>`${signInCodes.expiresAt} <= NOW(3)`,
      used: sql<number>`${signInCodes.usedAt} IS NOT NULL`,
    })
    .from(signInCodes)
    .where(eq(signInCodes.digest, digest));
  return row ? { ...row, tries: Number(row.tries), expired: Boolean(Number(row.expired)), used: Boolean(Number(row.used)) } : null;
}

/** Takes one of the code's tries before the code is checked, in one statement, so parallel submissions cannot share a try. */
export async function reserveTry(digest: string): Promise<boolean> {
  const [result] = await db()
    .update(signInCodes)
    .set({ tries: sql`${signInCodes.tries} + 1` })
    .where(and(eq(signInCodes.digest, digest), lt(signInCodes.tries, CODE_MAX_WRONG_TRIES), sql`${signInCodes.usedAt} IS NULL`, sql`${signInCodes.expiresAt} > NOW(3)`));
  return result.affectedRows === 1;
}

/** Marks a code as having signed someone in; false when another request used it first (a replay). */
export async function markCodeUsed(digest: string, email: string): Promise<boolean> {
  const [result] = await db()
    .update(signInCodes)
    .set({ usedAt: sql`NOW(3)` })
    .where(and(eq(signInCodes.digest, digest), eq(signInCodes.email, email), sql`${signInCodes.usedAt} IS NULL`, sql`${signInCodes.expiresAt} > NOW(3)`));
  return result.affectedRows === 1;
}

import { and, eq, sql } from "drizzle-orm";
import { db } from "../db/client";
import { users } from "../db/schema";

export async function findActiveUserByEmail(email: string) {
  const [row] = await db().select().from(users).where(and(eq(users.email, email.toLowerCase()), eq(users.active, true))).limit(1);
  return row ?? null;
}

export async function markSignedIn(userId: number): Promise<void> {
  await db().update(users).set({ lastSignInAt: sql`NOW(3)` }).where(eq(users.id, userId));
}

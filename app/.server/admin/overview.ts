import { count, eq, sql } from "drizzle-orm";
import { db } from "../db/client";
import { auditLog, familyLeads, materialFamilies, users } from "../db/schema";

export async function adminOverview() {
  const [[active], [inactive], [families], [leads], [recent]] = await Promise.all([
    db().select({ n: count() }).from(users).where(eq(users.active, true)),
    db().select({ n: count() }).from(users).where(eq(users.active, false)),
    db().select({ n: count() }).from(materialFamilies),
    db().select({ n: count() }).from(familyLeads),
    db().select({ n: count() }).from(auditLog).where(sql`${auditLog.at} > NOW(3) - INTERVAL 7 DAY`),
  ]);
  return { activeUsers: Number(active.n), inactiveUsers: Number(inactive.n), families: Number(families.n), leadAssignments: Number(leads.n), auditLastWeek: Number(recent.n) };
}

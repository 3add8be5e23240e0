import { and, count, desc, eq, lt, lte, sql } from "drizzle-orm";
import { db } from "./db/client";
import { signInRequests } from "./db/schema";
import { countWindowHit, type WindowCount } from "./rate-windows";

export const SIGN_IN_LIMIT = 5;
export const SIGN_IN_WINDOW_MINUTES = 15;

export type Reservation = { ok: true } | { ok: false; retryAt: Date };

const inWindow = () => sql`${signInRequests.at} > NOW(3) - INTERVAL ${SIGN_IN_WINDOW_MINUTES} MINUTE`;

// Insert first, then count the rows up to our own: two requests racing for the last place cannot both get it.
export async function reserveSignInRequest(email: string, ip: string): Promise<Reservation> {
  const [{ id }] = await db().insert(signInRequests).values({ email, ip }).$returningId();
  const rank = async (column: typeof signInRequests.email | typeof signInRequests.ip, value: string) => {
    const [row] = await db().select({ n: count() }).from(signInRequests).where(and(eq(column, value), inWindow(), lte(signInRequests.id, id)));
    return Number(row.n);
  };
  const [byEmail, byIp] = await Promise.all([rank(signInRequests.email, email), rank(signInRequests.ip, ip)]);
  if (byEmail <= SIGN_IN_LIMIT && byIp <= SIGN_IN_LIMIT) {
    if (id % 50 === 0) await db().delete(signInRequests).where(sql`${signInRequests.at} < NOW(3) - INTERVAL 1 DAY`);
    return { ok: true };
  }
  await db().delete(signInRequests).where(eq(signInRequests.id, id));
  const waits = await Promise.all(
    ([[signInRequests.email, email, byEmail], [signInRequests.ip, ip, byIp]] as const)
      .filter(([, , n]) => n > SIGN_IN_LIMIT)
      .map(async ([column, value]) => {
        // Measured by the database's clock, so the app's and the database's time zones never mix.
        const [row] = await db()
          .select({ ms: sql<string>`TIMESTAMPDIFF(MICROSECOND, NOW(3), ${signInRequests.at} + INTERVAL ${SIGN_IN_WINDOW_MINUTES} MINUTE) DIV 1000` })
          .from(signInRequests)
          .where(and(eq(column, value), inWindow(), lt(signInRequests.id, id)))
          .orderBy(desc(signInRequests.at))
          .limit(1)
          .offset(SIGN_IN_LIMIT - 1);
        return row ? Math.max(0, Number(row.ms)) : 0;
      }),
  );
  return { ok: false, retryAt: new Date(Date.now() + Math.max(0, ...waits)) };
}

// Fixed-window counters in rate_counters, for failures that must add up across requests and processes (wrong codes).
export async function countHit(bucket: string, windowSeconds: number): Promise<number> {
  await db().execute(sql`
    INSERT INTO rate_counters (bucket, window_start, \`count\`) VALUES (${bucket}, NOW(3), 1)
    ON DUPLICATE KEY UPDATE
      \`count\` = IF(window_start < NOW(3) - INTERVAL ${windowSeconds} SECOND, 1, \`count\` + 1),
      window_start = IF(window_start < NOW(3) - INTERVAL ${windowSeconds} SECOND, NOW(3), window_start)`);
  return readCount(bucket, windowSeconds);
}

export async function readCount(bucket: string, windowSeconds: number): Promise<number> {
  const [rows] = (await db().execute(sql`
    SELECT \`count\` AS n FROM rate_counters
    WHERE bucket = ${bucket} AND window_start >= NOW(3) - INTERVAL ${windowSeconds} SECOND`)) as unknown as [{ n: number }[]];
  return rows.length ? Number(rows[0].n) : 0;
}

// The API's per-minute limit, counted in memory rather than by a committed row per call, so a busy pipeline's reads
// do not each turn into a write. With several app processes (server/main.ts) the cluster's primary keeps the count
// (rate-windows.ts), so the limit holds across them. Fixed windows, like countHit; awaited, as the count may come
// from another process.
export function countHitInProcess(bucket: string, windowSeconds: number, now = Date.now()): Promise<WindowCount> {
  return countWindowHit(bucket, windowSeconds, now);
}

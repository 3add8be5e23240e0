import { createHash, randomBytes } from "node:crypto";
import { and, desc, eq, isNull, sql } from "drizzle-orm";
import { z } from "zod";
import { audit } from "./audit";
import { db } from "./db/client";
import { apiTokens, users } from "./db/schema";
import { currentUserColumns, getOptionalUser, toCurrentUser, type CurrentUser } from "./permissions";

export const TOKEN_PREFIX = "blt_";
const TOKEN_SHAPE = /^blt_[A-Za-z0-9_-]{43}$/;

export function hashToken(token: string): string {
  return createHash("sha256").update(token, "utf8").digest("hex");
}

// 32 random bytes; only the SHA-256 of the whole token is stored, and its first characters to tell tokens apart.
export function generateToken(): { token: string; prefix: string; hash: string } {
  const token = TOKEN_PREFIX + randomBytes(32).toString("base64url");
  return { token, prefix: token.slice(0, 12), hash: hashToken(token) };
}

export const tokenNameField = z.string().trim().min(1, "Give the token a name, e.g. the pipeline that uses it.").max(80, "Keep the name under 80 characters.");

export type TokenListRow = { id: number; name: string; prefix: string; createdAt: Date; lastUsedAt: Date | null; revokedAt: Date | null };

export async function listApiTokens(userId: number): Promise<TokenListRow[]> {
  return db()
    .select({ id: apiTokens.id, name: apiTokens.name, prefix: apiTokens.prefix, createdAt: apiTokens.createdAt, lastUsedAt: apiTokens.lastUsedAt, revokedAt: apiTokens.revokedAt })
    .from(apiTokens)
    .where(eq(apiTokens.userId, userId))
    .orderBy(desc(apiTokens.createdAt), desc(apiTokens.id));
}

// Enough for every pipeline a person runs; a cap keeps one account from spreading a flood over endless tokens.
export const MAX_ACTIVE_TOKENS = 10;

export type CreatedToken = { ok: true; id: number; token: string; prefix: string } | { ok: false; message: string };

export async function createApiToken(user: CurrentUser, name: string, request: Request): Promise<CreatedToken> {
  const { token, prefix, hash } = generateToken();
  // The user's row is locked while counting, so two requests at once cannot both take the last place.
  const created = await db().transaction(async (tx) => {
    await tx.select({ id: users.id }).from(users).where(eq(users.id, user.id)).for("update");
    const [{ n }] = await tx.select({ n: sql<number>`COUNT(*)` }).from(apiTokens).where(and(eq(apiTokens.userId, user.id), isNull(apiTokens.revokedAt)));
    if (Number(n) >= MAX_ACTIVE_TOKENS) return null;
    const [{ id }] = await tx.insert(apiTokens).values({ userId: user.id, name, tokenHash: hash, prefix }).$returningId();
    return id;
  });
  if (created === null) return { ok: false, message: `You already have ${MAX_ACTIVE_TOKENS} active tokens, the most one person may hold. Revoke one you no longer use, then make the new one.` };
  await audit({ id: user.id, email: user.email }, "token.created", { type: "api_token", id: created }, request, { name, prefix });
  return { ok: true, id: created, token, prefix };
}

export async function revokeApiToken(user: CurrentUser, tokenId: number, request: Request): Promise<boolean> {
  const [result] = await db()
    .update(apiTokens)
    .set({ revokedAt: sql`NOW(3)` })
    .where(and(eq(apiTokens.id, tokenId), eq(apiTokens.userId, user.id), isNull(apiTokens.revokedAt)));
  if (result.affectedRows === 0) return false;
  await audit({ id: user.id, email: user.email }, "token.revoked", { type: "api_token", id: tokenId }, request);
  return true;
}

export function apiError(status: number, code: string, message: string, field: string | null = null, headers?: HeadersInit): Response {
  return Response.json({ error: { code, message, field } }, { status, headers });
}

function unauthorized(message: string): Response {
  return apiError(401, "unauthorized", message, null, { "WWW-Authenticate": 'Bearer realm="bandledger"', "Cache-Control": "no-store" });
}

// A personal read token in "Authorization: Bearer blt_…"; throws a 401 JSON response otherwise.
export async function requireApiToken(request: Request): Promise<CurrentUser> {
  const header = request.headers.get("authorization");
  if (!header) throw unauthorized("Send a personal API token as \"Authorization: Bearer blt_…\"; create one on your account page.");
  const match = /^Bearer\s+(\S+)$/i.exec(header.trim());
  if (!match || !TOKEN_SHAPE.test(match[1])) throw unauthorized("The Authorization header does not hold a Bandledger token.");
  const [row] = await db()
    .select({ ...currentUserColumns, tokenId: apiTokens.id, revokedAt: apiTokens.revokedAt, active: users.active, stale: sql<number>`(${apiTokens.lastUsedAt} IS NULL OR ${apiTokens.lastUsedAt} < NOW(3) - INTERVAL 1 MINUTE)` })
    .from(apiTokens)
    .innerJoin(users, eq(users.id, apiTokens.userId))
    .where(eq(apiTokens.tokenHash, hashToken(match[1])))
    .limit(1);
  if (!row || row.revokedAt || !row.active) throw unauthorized("This token is unknown, revoked, or belongs to a deactivated account.");
  // At most one write a minute per token, so a busy pipeline does not turn every read into a write.
  if (Number(row.stale)) {
    await db()
      .update(apiTokens)
      .set({ lastUsedAt: sql`NOW(3)` })
      .where(and(eq(apiTokens.id, row.tokenId), sql`(${apiTokens.lastUsedAt} IS NULL OR ${apiTokens.lastUsedAt} < NOW(3) - INTERVAL 1 MINUTE)`));
  }
  return toCurrentUser(row);
}

// API routes read by scripts (a bearer token) and by the signed-in browser (the session cookie).
export async function requireApiUser(request: Request): Promise<CurrentUser> {
  if (request.headers.has("authorization")) return requireApiToken(request);
  const user = await getOptionalUser(request);
  if (!user) throw unauthorized("Sign in, or send a personal API token as \"Authorization: Bearer blt_…\".");
  return user;
}

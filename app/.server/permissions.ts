import { and, eq, sql } from "drizzle-orm";
import { data, redirect } from "react-router";
import { db } from "./db/client";
import { familyLeads, users, type Role } from "./db/schema";
import { pageAddress } from "./auth/return-to";
import { env } from "./env";
import { getSession, SESSION_MAX_AGE_SECONDS } from "./session";

export type CurrentUser = {
  id: number;
  email: string;
  name: string;
  role: Role;
  leadFamilyIds: number[];
};

const RANK: Record<Role, number> = { reader: 0, contributor: 1, lead: 2, admin: 3 };

export function hasRole(user: Pick<CurrentUser, "role">, role: Role): boolean {
  return RANK[user.role] >= RANK[role];
}

// The user and the families they lead, in one round trip: every signed-in page and API call asks. The subquery
// names its tables itself: in a one-table select the ORM writes columns unqualified, and `id` would then mean
// whichever table has one.
export const currentUserColumns = {
  id: users.id,
  email: users.email,
  name: users.name,
  role: users.role,
  leads: sql<string | null>`(SELECT GROUP_CONCAT(fl.family_id ORDER BY fl.family_id) FROM ${familyLeads} fl WHERE fl.user_id = ${users}.id)`,
};

export function toCurrentUser(row: { id: number; email: string; name: string; role: Role; leads: string | null }): CurrentUser {
  // Families count only for the lead role: an assignment left behind never lends a lead's rights to anyone else.
  const leadFamilyIds = row.role === "lead" && row.leads ? row.leads.split(",").map(Number) : [];
  return { id: row.id, email: row.email, name: row.name, role: row.role, leadFamilyIds };
}

export async function loadUser(userId: number): Promise<CurrentUser | null> {
  const [row] = await db().select(currentUserColumns).from(users).where(and(eq(users.id, userId), eq(users.active, true))).limit(1);
  return row ? toCurrentUser(row) : null;
}

// The root loader and the page's loader both ask for the user of one request: ask the database once.
const usersOfRequests = new WeakMap<Request, Promise<CurrentUser | null>>();

export function getOptionalUser(request: Request): Promise<CurrentUser | null> {
  let user = usersOfRequests.get(request);
  if (!user) {
    user = readOptionalUser(request);
    usersOfRequests.set(request, user);
  }
  return user;
}

async function readOptionalUser(request: Request): Promise<CurrentUser | null> {
  const session = await getSession(request);
  const userId = session.get("userId");
  if (!userId) return null;
  // The cookie's own expiry is the browser's promise; a replayed old cookie is refused here.
  const signedInAt = session.get("signedInAt") ?? 0;
  if (Date.now() - signedInAt > SESSION_MAX_AGE_SECONDS * 1000) return null;
  return loadUser(userId);
}

function signInUrl(request: Request): string {
  return `/sign-in?returnTo=${encodeURIComponent(pageAddress(request.url))}`;
}

export function forbidden(message = "Your role does not allow this."): never {
  throw data({ message }, { status: 403, statusText: "Forbidden" });
}

export async function requireUser(request: Request): Promise<CurrentUser> {
  const user = await getOptionalUser(request);
  if (!user) throw redirect(signInUrl(request));
  return user;
}

export async function requireRole(request: Request, role: Role): Promise<CurrentUser> {
  const user = await requireUser(request);
  if (!hasRole(user, role)) forbidden(`This page needs the ${role} role.`);
  return user;
}

export function isLeadOf(user: CurrentUser, familyId: number): boolean {
  return user.role === "admin" || (user.role === "lead" && user.leadFamilyIds.includes(familyId));
}

export async function requireLeadOf(request: Request, familyId: number): Promise<CurrentUser> {
  const user = await requireRole(request, "lead");
  if (!isLeadOf(user, familyId)) forbidden("Only a lead of this material family may do this.");
  return user;
}

// Resource routes that change anything: React Router checks Origin only for UI actions, so these check it themselves.
export function requireSameOrigin(request: Request): void {
  const allowed = new Set([new URL(request.url).origin, new URL(env().BANDLEDGER_PUBLIC_URL).origin]);
  let source = request.headers.get("origin");
  if (!source || source === "null") {
    source = null;
    const referer = request.headers.get("referer");
    if (referer) {
      try {
        source = new URL(referer).origin;
      } catch {
        source = null;
      }
    }
  }
  if (!source || !allowed.has(source)) {
    throw Response.json(
      { error: { code: "foreign_origin", message: "This change must come from a Bandledger page of this site.", field: null } },
      { status: 403 },
    );
  }
}

import { and, asc, eq, inArray, sql } from "drizzle-orm";
import { z } from "zod";
import { audit } from "../audit";
import { db } from "../db/client";
import { familyLeads, materialFamilies, ROLES, users, type Role } from "../db/schema";
import { env } from "../env";
import { sendMail } from "../mail/send";
import { invitationMail } from "../mail/templates";
import type { CurrentUser } from "../permissions";

export type FieldErrors = Record<string, string>;
export type Outcome<T = void> = { ok: true; value: T; notice?: string } | { ok: false; errors: FieldErrors };

export const inviteInput = z.object({
  email: z.string({ error: "Enter the address to invite." }).trim().toLowerCase().min(1, "Enter the address to invite.").pipe(z.email("Enter an e-mail address such as name@example.com.").max(254, "That address is too long.")),
  name: z.string({ error: "Enter the person's name." }).trim().min(1, "Enter the person's name.").max(120, "Keep the name under 120 characters."),
  role: z.enum(ROLES, { error: "Choose one of the four roles." }),
});

export const userChangeInput = z.object({
  userId: z.coerce.number().int().positive(),
  version: z.coerce.number().int().positive(),
});

export const roleChangeInput = userChangeInput.extend({ role: z.enum(ROLES, { error: "Choose one of the four roles." }) });

export function fieldErrors(error: z.ZodError): FieldErrors {
  const out: FieldErrors = {};
  for (const issue of error.issues) {
    const key = String(issue.path[0] ?? "form");
    out[key] ??= issue.message;
  }
  return out;
}

export type UserListRow = {
  id: number; email: string; name: string; role: Role; active: boolean; version: number;
  lastSignInAt: Date | null; createdAt: Date; leads: { id: number; name: string }[];
};

export async function listUsers(): Promise<UserListRow[]> {
  const rows = await db()
    .select({ id: users.id, email: users.email, name: users.name, role: users.role, active: users.active, version: users.version, lastSignInAt: users.lastSignInAt, createdAt: users.createdAt })
    .from(users)
    .orderBy(sql`${users.active} DESC`, asc(users.name));
  const leads = rows.length
    ? await db()
        .select({ userId: familyLeads.userId, id: materialFamilies.id, name: materialFamilies.name })
        .from(familyLeads)
        .innerJoin(materialFamilies, eq(materialFamilies.id, familyLeads.familyId))
        .where(inArray(familyLeads.userId, rows.map((r) => r.id)))
        .orderBy(asc(materialFamilies.name))
    : [];
  return rows.map((r) => ({ ...r, leads: leads.filter((l) => l.userId === r.id).map(({ id, name }) => ({ id, name })) }));
}

export async function inviteUser(admin: CurrentUser, input: z.infer<typeof inviteInput>, request: Request): Promise<Outcome<{ id: number }>> {
  const [existing] = await db().select({ id: users.id, active: users.active }).from(users).where(eq(users.email, input.email)).limit(1);
  if (existing) {
    return { ok: false, errors: { email: existing.active ? "This address already has an account." : "This address has a deactivated account; reactivate it in the list below." } };
  }
  const [{ id }] = await db().insert(users).values({ email: input.email, name: input.name, role: input.role, active: true, invitedBy: admin.id }).$returningId();
  await audit({ id: admin.id, email: admin.email }, "user.invited", { type: "user", id }, request, { email: input.email, role: input.role });
  const signInUrl = new URL(`/sign-in?email=${encodeURIComponent(input.email)}`, env().BANDLEDGER_PUBLIC_URL).toString();
  try {
    await sendMail(invitationMail({ to: input.email, name: input.name, inviterName: admin.name, role: input.role, signInUrl, publicUrl: env().BANDLEDGER_PUBLIC_URL }));
    return { ok: true, value: { id }, notice: `Invited ${input.name}; the invitation is on its way to ${input.email}.` };
  } catch (error) {
    await audit(null, "mail.failed", { type: "user", id }, null, { subject: "invitation", error: (error as Error).message });
    return { ok: true, value: { id }, notice: `Invited ${input.name}, but the invitation mail could not be sent (${(error as Error).message}). They can still sign in at ${signInUrl}.` };
  }
}

const LAST_ADMIN = "This is the last active admin. Make someone else an admin first.";
const CHANGED = "Someone changed this person meanwhile; the list now shows the current state.";

type Tx = Parameters<Parameters<ReturnType<typeof db>["transaction"]>[0]>[0];

async function lockTarget(tx: Tx, userId: number) {
  const [row] = await tx.select().from(users).where(eq(users.id, userId)).for("update");
  return row;
}

// Counted under lock, so two admins demoting each other at once cannot leave the team without one.
async function otherActiveAdmins(tx: Tx, userId: number): Promise<number> {
  const rows = await tx.select({ id: users.id }).from(users).where(and(eq(users.role, "admin"), eq(users.active, true))).for("update");
  return rows.filter((r) => r.id !== userId).length;
}

export async function changeRole(admin: CurrentUser, input: z.infer<typeof roleChangeInput>, request: Request): Promise<Outcome> {
  const result = await db().transaction(async (tx) => {
    const target = await lockTarget(tx, input.userId);
    if (!target) return { ok: false as const, errors: { row: "This person is not in the list any more." } };
    if (target.version !== input.version) return { ok: false as const, errors: { row: CHANGED } };
    if (target.role === input.role) return { ok: true as const, from: target.role, removed: [] as number[], target };
    if (target.role === "admin" && target.active && (await otherActiveAdmins(tx, target.id)) === 0) return { ok: false as const, errors: { row: LAST_ADMIN } };
    await tx.update(users).set({ role: input.role, version: sql`${users.version} + 1` }).where(and(eq(users.id, target.id), eq(users.version, input.version)));
    let removed: number[] = [];
    // Assignments belong to the lead role alone: they go whenever the new role is another, admin included.
    if (input.role !== "lead") {
      removed = (await tx.select({ familyId: familyLeads.familyId }).from(familyLeads).where(eq(familyLeads.userId, target.id))).map((r) => r.familyId);
      if (removed.length) await tx.delete(familyLeads).where(eq(familyLeads.userId, target.id));
    }
    return { ok: true as const, from: target.role, removed, target };
  });
  if (!result.ok) return result;
  if (result.from === input.role) return { ok: true, value: undefined, notice: `${result.target.name} already has the ${input.role} role.` };
  await audit({ id: admin.id, email: admin.email }, "user.role_changed", { type: "user", id: input.userId }, request, { from: result.from, to: input.role, leadFamiliesRemoved: result.removed });
  const dropped = result.removed.length ? ` Their ${result.removed.length} lead assignment(s) were removed.` : "";
  return { ok: true, value: undefined, notice: `${result.target.name} now has the ${input.role} role.${dropped}` };
}

export async function setActive(admin: CurrentUser, input: z.infer<typeof userChangeInput> & { active: boolean }, request: Request): Promise<Outcome> {
  const result = await db().transaction(async (tx) => {
    const target = await lockTarget(tx, input.userId);
    if (!target) return { ok: false as const, errors: { row: "This person is not in the list any more." } };
    if (target.version !== input.version) return { ok: false as const, errors: { row: CHANGED } };
    if (target.active === input.active) return { ok: true as const, target, changed: false };
    if (!input.active && target.role === "admin" && (await otherActiveAdmins(tx, target.id)) === 0) return { ok: false as const, errors: { row: LAST_ADMIN } };
    await tx.update(users).set({ active: input.active, version: sql`${users.version} + 1` }).where(and(eq(users.id, target.id), eq(users.version, input.version)));
    return { ok: true as const, target, changed: true };
  });
  if (!result.ok) return result;
  if (result.changed) {
    await audit({ id: admin.id, email: admin.email }, input.active ? "user.reactivated" : "user.deactivated", { type: "user", id: input.userId }, request, { email: result.target.email });
  }
  return { ok: true, value: undefined, notice: input.active ? `${result.target.name} can sign in again.` : `${result.target.name} is deactivated and can no longer sign in.` };
}

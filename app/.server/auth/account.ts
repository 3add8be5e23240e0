import { eq } from "drizzle-orm";
import { z } from "zod";
import { audit } from "../audit";
import { db } from "../db/client";
import { users } from "../db/schema";
import type { CurrentUser } from "../permissions";

export const profileInput = z.object({
  name: z.string().trim().min(1, "Enter your name.").max(120, "Keep the name under 120 characters."),
  notifyMode: z.enum(["immediate", "digest"], { error: "Choose how you want notices." }),
});

export async function accountDetails(userId: number) {
  const [row] = await db().select({ name: users.name, email: users.email, role: users.role, notifyMode: users.notifyMode, lastSignInAt: users.lastSignInAt }).from(users).where(eq(users.id, userId));
  return row;
}

export async function updateProfile(user: CurrentUser, input: z.infer<typeof profileInput>, request: Request): Promise<void> {
  const [before] = await db().select({ name: users.name, notifyMode: users.notifyMode }).from(users).where(eq(users.id, user.id));
  await db().update(users).set({ name: input.name, notifyMode: input.notifyMode }).where(eq(users.id, user.id));
  if (before.name !== input.name || before.notifyMode !== input.notifyMode) {
    await audit({ id: user.id, email: user.email }, "account.updated", { type: "user", id: user.id }, request, { from: before, to: input });
  }
}

import { asc, eq } from "drizzle-orm";
import { z } from "zod";
import { audit } from "../audit";
import { db } from "../db/client";
import { familyLeads, materialFamilies, users } from "../db/schema";
import type { CurrentUser } from "../permissions";
import type { Outcome } from "./users";

export const familyCreateInput = z.object({
  key: z.string({ error: "Enter a short key, e.g. arsenides." }).trim().toLowerCase()
    .min(1, "Enter a short key, e.g. arsenides.")
    .max(40, "Keep the key under 40 characters.")
    .regex(/^[a-z0-9]+(-[a-z0-9]+)*$/, "Use lower-case letters, digits and single hyphens, e.g. group-iv."),
  name: z.string({ error: "Enter the family's name." }).trim().min(1, "Enter the family's name.").max(120, "Keep the name under 120 characters."),
  description: z.string().trim().max(2000, "Keep the description under 2000 characters.").optional().transform((s) => s || null),
});

export const familyRenameInput = z.object({
  familyId: z.coerce.number().int().positive(),
  name: z.string({ error: "Enter the family's name." }).trim().min(1, "Enter the family's name.").max(120, "Keep the name under 120 characters."),
});

export type FamilyRow = { id: number; key: string; name: string; description: string | null; leads: { id: number; name: string }[] };

export async function listFamilies(): Promise<FamilyRow[]> {
  const families = await db().select().from(materialFamilies).orderBy(asc(materialFamilies.name));
  const leads = await db()
    .select({ familyId: familyLeads.familyId, id: users.id, name: users.name })
    .from(familyLeads)
    .innerJoin(users, eq(users.id, familyLeads.userId))
    .orderBy(asc(users.name));
  return families.map((f) => ({
    id: f.id, key: f.key, name: f.name, description: f.description,
    leads: leads.filter((l) => l.familyId === f.id).map(({ id, name }) => ({ id, name })),
  }));
}

export async function createFamily(admin: CurrentUser, input: z.infer<typeof familyCreateInput>, request: Request): Promise<Outcome<{ id: number }>> {
  const [clash] = await db().select({ id: materialFamilies.id }).from(materialFamilies).where(eq(materialFamilies.key, input.key)).limit(1);
  if (clash) return { ok: false, errors: { key: "A family with this key exists already." } };
  const [{ id }] = await db().insert(materialFamilies).values(input).$returningId();
  await audit({ id: admin.id, email: admin.email }, "family.created", { type: "material_family", id }, request, { key: input.key, name: input.name });
  return { ok: true, value: { id }, notice: `Created the family ${input.name}.` };
}

export async function renameFamily(admin: CurrentUser, input: z.infer<typeof familyRenameInput>, request: Request): Promise<Outcome> {
  const [family] = await db().select().from(materialFamilies).where(eq(materialFamilies.id, input.familyId)).limit(1);
  if (!family) return { ok: false, errors: { name: "This family is not in the list any more." } };
  if (family.name === input.name) return { ok: true, value: undefined, notice: "The name is unchanged." };
  await db().update(materialFamilies).set({ name: input.name }).where(eq(materialFamilies.id, family.id));
  await audit({ id: admin.id, email: admin.email }, "family.renamed", { type: "material_family", id: family.id }, request, { from: family.name, to: input.name });
  return { ok: true, value: undefined, notice: `Renamed ${family.name} to ${input.name}.` };
}

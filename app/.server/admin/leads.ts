import { and, asc, eq } from "drizzle-orm";
import { z } from "zod";
import { audit } from "../audit";
import { db } from "../db/client";
import { familyLeads, materialFamilies, users } from "../db/schema";
import type { CurrentUser } from "../permissions";
import type { Outcome } from "./users";

export const leadInput = z.object({
  userId: z.coerce.number({ error: "Choose a lead." }).int().positive("Choose a lead."),
  familyId: z.coerce.number({ error: "Choose a material family." }).int().positive("Choose a material family."),
});

export async function leadCandidates() {
  return db()
    .select({ id: users.id, name: users.name, email: users.email })
    .from(users)
    .where(and(eq(users.role, "lead"), eq(users.active, true)))
    .orderBy(asc(users.name));
}

export async function assignLead(admin: CurrentUser, input: z.infer<typeof leadInput>, request: Request): Promise<Outcome> {
  const [user] = await db().select().from(users).where(eq(users.id, input.userId)).limit(1);
  if (!user || !user.active || user.role !== "lead") return { ok: false, errors: { userId: "Only an active person with the lead role can lead a family; change the role on the users page first." } };
  const [family] = await db().select().from(materialFamilies).where(eq(materialFamilies.id, input.familyId)).limit(1);
  if (!family) return { ok: false, errors: { familyId: "Choose a material family from the list." } };
  const [already] = await db().select().from(familyLeads).where(and(eq(familyLeads.userId, user.id), eq(familyLeads.familyId, family.id))).limit(1);
  if (already) return { ok: false, errors: { userId: `${user.name} already leads ${family.name}.` } };
  await db().insert(familyLeads).values({ userId: user.id, familyId: family.id, assignedBy: admin.id });
  await audit({ id: admin.id, email: admin.email }, "lead.assigned", { type: "material_family", id: family.id }, request, { userId: user.id, email: user.email, family: family.key });
  return { ok: true, value: undefined, notice: `${user.name} now leads ${family.name}.` };
}

export async function unassignLead(admin: CurrentUser, input: z.infer<typeof leadInput>, request: Request): Promise<Outcome> {
  const [row] = await db()
    .select({ name: users.name, email: users.email, family: materialFamilies.name, familyKey: materialFamilies.key })
    .from(familyLeads)
    .innerJoin(users, eq(users.id, familyLeads.userId))
    .innerJoin(materialFamilies, eq(materialFamilies.id, familyLeads.familyId))
    .where(and(eq(familyLeads.userId, input.userId), eq(familyLeads.familyId, input.familyId)))
    .limit(1);
  if (!row) return { ok: true, value: undefined, notice: "That assignment was already removed." };
  await db().delete(familyLeads).where(and(eq(familyLeads.userId, input.userId), eq(familyLeads.familyId, input.familyId)));
  await audit({ id: admin.id, email: admin.email }, "lead.unassigned", { type: "material_family", id: input.familyId }, request, { userId: input.userId, email: row.email, family: row.familyKey });
  return { ok: true, value: undefined, notice: `${row.name} no longer leads ${row.family}.` };
}

import { eq, sql } from "drizzle-orm";
import { closeDb, db, type Db } from "~/.server/db/client";
import { familyLeads, materialFamilies, users } from "~/.server/db/schema";
import { loadProposals } from "./proposals";
import { syncQuantities } from "~/.server/registry/catalogue";
import { loadRegistry } from "./registry";
import { loadSets } from "./sets";
import { FAMILIES, PEOPLE } from "./team";

// Idempotent: every row is looked up by its natural key before it is written.
export async function loadTeam(d: Db) {
  for (const f of FAMILIES) {
    await d.insert(materialFamilies).values(f).onDuplicateKeyUpdate({ set: { key: sql`\`key\`` } });
  }
  const families = await d.select().from(materialFamilies);
  const familyId = new Map(families.map((f) => [f.key, f.id]));
  for (const p of PEOPLE) {
    await d.insert(users).values({ email: p.email, name: p.name, role: p.role, active: p.active, notifyMode: p.notifyMode })
      .onDuplicateKeyUpdate({ set: { email: sql`email` } });
    const [u] = await d.select().from(users).where(eq(users.email, p.email));
    for (const key of p.leads) {
      await d.insert(familyLeads).values({ userId: u.id, familyId: familyId.get(key)! }).onDuplicateKeyUpdate({ set: { userId: sql`user_id` } });
    }
  }
  await ensureFirstAdmin(d);
}

// BANDLEDGER_ADMIN_EMAIL is made an active admin on every start, so a team can bootstrap without the demo.
export async function ensureFirstAdmin(d: Db) {
  const admin = process.env.BANDLEDGER_ADMIN_EMAIL?.trim().toLowerCase();
  if (!admin) return;
  await d.insert(users).values({ email: admin, name: admin.split("@")[0], role: "admin", active: true })
    .onDuplicateKeyUpdate({ set: { role: "admin", active: true } });
}

export async function loadDemo(d: Db) {
  await loadTeam(d);
  await loadRegistry(d);
  await loadProposals(d);
  await loadSets(d);
}

async function main() {
  const ifEmpty = process.argv.includes("--if-empty");
  const d = db();
  const [{ n }] = await d.select({ n: sql<number>`count(*)` }).from(users);
  if (ifEmpty && Number(n) > 0) {
    await ensureFirstAdmin(d);
    // The quantity catalogue is code: a database made before a quantity was added gets it on the next start.
    await syncQuantities(d);
    console.error("bandledger: demo data already present, keeping it");
  } else {
    await loadDemo(d);
    console.error("bandledger: demo data loaded");
  }
  await closeDb();
}

if (import.meta.url === `file://${process.argv[1]}`) await main();

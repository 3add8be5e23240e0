import { and, asc, eq, inArray, lte } from "drizzle-orm";
import type { Db } from "~/.server/db/client";
import type { Executor } from "~/.server/registry/executor";
import { materials, parameterSets, quantities, records, revisions, setMembers, setWatches, users } from "~/.server/db/schema";
import { writeRelease } from "~/.server/sets/service";
import { conditionKey, quantityByKey, type Valley } from "~/domain/quantities";
import { TEAM_DOMAIN } from "./team";

// Demo parameter sets of Kestrel Devices (invented). Releases are frozen "as of" past dates: each pins the revision
// of each record that was current then, so the demo shows what moved between releases and why.

type Member = { material: string; quantity: string; valley?: Valley; temperatureK?: string; composition?: string };

const m = (material: string, quantity: string, extra: Omit<Member, "material" | "quantity"> = {}): Member => ({ material, quantity, ...extra });

const HEMT_R1: Member[] = [
  m("GaAs", "eg", { valley: "G", temperatureK: "300" }),
  m("GaAs", "eg", { valley: "G" }),
  m("GaAs", "varshni_alpha", { valley: "G" }),
  m("GaAs", "varshni_beta", { valley: "G" }),
  m("GaAs", "me", { valley: "G" }),
  m("GaAs", "lattice_a", { temperatureK: "300" }),
  m("GaAs", "lattice_a", { temperatureK: "295" }),
  m("GaAs", "delta_so"),
  m("AlAs", "eg", { valley: "G" }),
  m("AlAs", "varshni_alpha", { valley: "G" }),
  m("AlAs", "varshni_beta", { valley: "G" }),
  m("AlAs", "me", { valley: "G" }),
  m("AlAs", "lattice_a", { temperatureK: "300" }),
  m("AlGaAs", "eg_bowing_c0", { valley: "G" }),
  m("AlGaAs", "eg_bowing_c1", { valley: "G" }),
];
const HEMT_R2: Member[] = [
  ...HEMT_R1.filter((x) => !(x.quantity === "lattice_a" && x.temperatureK === "295")),
  m("GaAs", "lattice_dadt"),
  m("GaAs", "ep"),
  m("GaAs", "kane_f"),
];
const HEMT_R3: Member[] = [...HEMT_R2, m("AlGaAs", "eg", { valley: "G", temperatureK: "300", composition: "0.3" })];

const PHOTODIODE: Member[] = [
  m("InGaAs", "eg_bowing_c0", { valley: "G" }),
  m("InAs", "eg", { valley: "G" }),
  m("InAs", "varshni_alpha", { valley: "G" }),
  m("InAs", "varshni_beta", { valley: "G" }),
  m("InAs", "me", { valley: "G" }),
  m("InAs", "lattice_a", { temperatureK: "300" }),
  m("GaAs", "eg", { valley: "G" }),
  m("GaAs", "lattice_a", { temperatureK: "300" }),
  m("InP", "lattice_a", { temperatureK: "300" }),
];

export const DEMO_SETS = [
  {
    slug: "hemt-baseline",
    name: "HEMT baseline",
    purpose: "AlGaAs/GaAs HEMT drift-diffusion and Schrödinger–Poisson runs",
    description: "The values every HEMT simulation of the team starts from: GaAs channel, AlAs and the AlGaAs barrier with its Γ-gap bowing. Cite the release number and its SHA-256 in reports.",
    createdBy: "ravi.menon",
    releases: [
      { at: "2025-10-01T12:00:00.000Z", by: "ravi.menon", members: HEMT_R1 },
      { at: "2025-12-01T12:00:00.000Z", by: "hanna.lindqvist", members: HEMT_R2 },
      { at: "2026-03-02T09:15:00.000Z", by: "ravi.menon", members: HEMT_R3 },
    ],
    members: HEMT_R3,
    watchers: ["priya.raman", "hanna.lindqvist"],
  },
  {
    slug: "ingaas-photodiode",
    name: "InGaAs photodiode",
    purpose: "In(0.53)Ga(0.47)As on InP photodiode absorption and band-alignment studies",
    description: "Draft: end members and bowing for lattice-matched InGaAs; not frozen yet.",
    createdBy: "mei.tanaka",
    releases: [],
    members: PHOTODIODE,
    watchers: ["mei.tanaka"],
  },
] as const;

async function recordIdOf(d: Executor, member: Member): Promise<number> {
  const q = quantityByKey(member.quantity);
  if (!q) throw new Error(`unknown quantity ${member.quantity}`);
  const key = conditionKey(q, { temperatureK: member.temperatureK ?? null, valley: member.valley ?? null, composition: member.composition ?? null });
  const [row] = await d
    .select({ id: records.id })
    .from(records)
    .innerJoin(materials, eq(materials.id, records.materialId))
    .innerJoin(quantities, eq(quantities.id, records.quantityId))
    .where(and(eq(materials.key, member.material), eq(quantities.key, member.quantity), eq(records.conditionKey, key)));
  if (!row) throw new Error(`demo set member ${member.material} ${member.quantity} ${key} is not in the registry: load the registry first`);
  return row.id;
}

// The value revision of each record that was current at `at` (the newest approved by then).
async function pinsAsOf(d: Executor, recordIds: number[], at: Date) {
  const rows = await d
    .select({ recordId: revisions.recordId, revisionId: revisions.id, kind: revisions.kind })
    .from(revisions)
    .where(and(inArray(revisions.recordId, recordIds), lte(revisions.approvedAt, at)))
    .orderBy(asc(revisions.recordId), asc(revisions.seq));
  const latest = new Map<number, { revisionId: number; kind: "value" | "retirement" }>();
  for (const r of rows) latest.set(r.recordId, r);
  return recordIds.map((recordId) => {
    const pin = latest.get(recordId);
    if (!pin || pin.kind !== "value") throw new Error(`record ${recordId} had no current value at ${at.toISOString()}`);
    return { recordId, revisionId: pin.revisionId };
  });
}

/** Loads the demo sets with their releases and watchers; a set that exists already is left as it is. */
export async function loadSets(d: Db): Promise<void> {
  const people = new Map((await d.select({ id: users.id, email: users.email, name: users.name }).from(users)).map((u) => [u.email, u]));
  const person = (p: string) => {
    const u = people.get(`${p}@${TEAM_DOMAIN}`);
    if (!u) throw new Error(`demo person ${p} is missing: load the team first`);
    return u;
  };
  for (const s of DEMO_SETS) {
    const [existing] = await d.select({ id: parameterSets.id }).from(parameterSets).where(eq(parameterSets.slug, s.slug));
    if (existing) continue;
    await d.transaction(async (tx) => {
      const [{ id }] = await tx
        .insert(parameterSets)
        .values({ slug: s.slug, name: s.name, purpose: s.purpose, description: s.description, createdBy: person(s.createdBy).id, createdAt: new Date(s.releases[0]?.at ?? Date.now()) })
        .$returningId();
      const set = { id, slug: s.slug, name: s.name, purpose: s.purpose, description: s.description };
      for (const [i, r] of s.releases.entries()) {
        const ids = await Promise.all(r.members.map((x) => recordIdOf(tx, x)));
        const at = new Date(r.at);
        const frozenBy = person(r.by);
        await writeRelease(tx, { set, number: i + 1, pins: await pinsAsOf(tx, ids, at), frozenBy: { id: frozenBy.id, name: frozenBy.name }, frozenAt: at });
      }
      const memberIds = await Promise.all(s.members.map((x) => recordIdOf(tx, x)));
      await tx.insert(setMembers).values(memberIds.map((recordId) => ({ setId: id, recordId, addedBy: person(s.createdBy).id })));
      for (const w of s.watchers) await tx.insert(setWatches).values({ setId: id, userId: person(w).id });
    });
  }
}

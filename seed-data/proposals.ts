import { and, count, eq } from "drizzle-orm";
import type { Db } from "~/.server/db/client";
import { materials, notices, proposalComments, proposals, quantities, records, users } from "~/.server/db/schema";
import { loadProposalCatalogue } from "~/.server/workflow/catalogue";
import { loadFacts, summaryOf } from "~/.server/workflow/facts";
import { submittedNotice } from "~/.server/workflow/notice-templates";
import { validateProposal } from "~/domain/proposal-schemas";
import { TEAM_DOMAIN } from "./team";

// The demo's open work at Kestrel Devices (an invented team): proposals waiting for review, one rejected with its
// reason, one draft, and a comment thread. Values from [V01] (Vurgaftman et al. 2001, from memory) or calculated
// from it; the legacy-deck value and the KD report are invented for the demo.

const V01 = { kind: "doi", doi: "10.1063/1.1368156", title: "Band parameters for III–V compound semiconductors and their alloys", authors: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan", year: "2001" };

type Person = "tomas.okafor" | "mei.tanaka" | "ravi.menon" | "hanna.lindqvist";

type DemoProposal = {
  author: Person;
  /** The record a change is about, by its natural key; absent for a new record. */
  record?: { material: string; quantity: string; conditionKey: string };
  payload: Record<string, unknown>;
  state: "draft" | "submitted" | "rejected";
  daysAgo: number;
  decision?: { by: Person; reason: string; daysAgo: number };
  comments?: { by: Person; body: string; daysAgo: number }[];
};

export const DEMO_PROPOSALS: DemoProposal[] = [
  {
    author: "mei.tanaka",
    record: { material: "GaAs", quantity: "eg", conditionKey: "T=77|V=G|x=" },
    payload: {
      kind: "revision", value: "1.507596", unit: "eV", method: "calculated", source: V01, locator: "GaAs parameter table: Eg(0) = 1.519 eV, α = 0.5405 meV/K, β = 204 K",
      notes: "Varshni with the [V01] parameters at 77 K, kept to the digits the formula gives, so the stored copy matches the 0 K fit exactly.",
    },
    state: "submitted",
    daysAgo: 3,
    comments: [
      { by: "ravi.menon", body: "Seven significant digits claim more than the fit supports. Is the point only to match the 0 K fit to round-off?", daysAgo: 2 },
      { by: "mei.tanaka", body: "Yes: the uncertainty of the fit is a few meV; the digits only keep the two records from disagreeing in the consistency check.", daysAgo: 2 },
    ],
  },
  {
    author: "tomas.okafor",
    payload: {
      kind: "new_record", material: "AlGaAs", quantity: "lattice_a", temperatureMode: "stated", temperatureK: "300", composition: "0.3",
      value: "5.655605", unit: "Å", method: "calculated", source: V01, locator: "AlAs and GaAs parameter tables",
      notes: "Vegard's law between AlAs (5.6611 Å) and GaAs (5.65325 Å) at x = 0.3, for the barrier of the HEMT stack.",
    },
    state: "submitted",
    daysAgo: 1,
  },
  {
    author: "tomas.okafor",
    payload: {
      kind: "new_record", material: "InP", quantity: "eg", temperatureMode: "stated", temperatureK: "300", valley: "G",
      value: "1.3529", unit: "eV", method: "calculated", source: V01, locator: "InP parameter table: Eg(0) = 1.4236 eV, α = 0.363 meV/K, β = 162 K",
      notes: "Varshni with the [V01] parameters at 300 K: 1.4236 − 0.363e-3·300²/(300 + 162) eV = 1.352886 eV, kept to five digits.",
    },
    state: "submitted",
    daysAgo: 0,
  },
  {
    author: "tomas.okafor",
    record: { material: "GaAs", quantity: "me", conditionKey: "T=fit0|V=G|x=" },
    payload: {
      kind: "revision", value: "0.063", unit: "m0", method: "compilation", source: { kind: "report", reportNumber: "KD-SIM-2025-007", title: "Parameters of the legacy HEMT simulation deck, as found (Kestrel Devices internal)", authors: "T. Okafor", year: "2025" },
      locator: "deck sheet 'materials', row 7", notes: "The value the legacy deck used; proposed so that old runs can be reproduced.",
    },
    state: "rejected",
    daysAgo: 12,
    decision: { by: "hanna.lindqvist", reason: "0.063 m0 has no source behind the deck, and the Kane check with the GaAs Ep, F, Eg and Δso agrees with the current 0.067 m0. Keep the deck's value in a parameter set of its own if old runs must be reproduced.", daysAgo: 11 },
  },
  {
    author: "mei.tanaka",
    payload: {
      kind: "new_record", material: "AlGaAs", quantity: "eg", temperatureMode: "stated", temperatureK: "77", valley: "G", composition: "0.3",
      value: "", unit: "eV", method: "measured", source: { kind: "report", reportNumber: "KD-EPI-2026-014", title: "Room-temperature photoluminescence maps of MBE Al(0.3)Ga(0.7)As calibration wafers K1423–K1425 (Kestrel Devices internal)", authors: "M. Tanaka, T. Okafor", year: "2026" },
      locator: "Table 4", notes: "Waiting for the 77 K photoluminescence maps.",
    },
    state: "draft",
    daysAgo: 0,
  },
];

const ago = (days: number, hour = 9) => new Date(Date.now() - days * 86_400_000 - hour * 60_000);

/** Loads the demo proposals once (after the team and the registry); a database that has proposals is left alone. */
export async function loadProposals(d: Db): Promise<void> {
  const [{ n }] = await d.select({ n: count() }).from(proposals);
  if (Number(n) > 0) return;
  const people = new Map((await d.select({ id: users.id, email: users.email, mode: users.notifyMode }).from(users)).map((u) => [u.email, u]));
  const person = (p: Person) => {
    const u = people.get(`${p}@${TEAM_DOMAIN}`);
    if (!u) throw new Error(`demo person ${p} is missing: load the team first`);
    return u;
  };
  const catalogue = await loadProposalCatalogue(d);
  for (const demo of DEMO_PROPOSALS) {
    const author = person(demo.author);
    const payload = { ...demo.payload } as Record<string, unknown>;
    let record: { id: number; currentRevisionId: number | null; materialId: number; quantityId: number } | undefined;
    if (demo.record) {
      [record] = await d
        .select({ id: records.id, currentRevisionId: records.currentRevisionId, materialId: records.materialId, quantityId: records.quantityId })
        .from(records)
        .innerJoin(materials, eq(materials.id, records.materialId))
        .innerJoin(quantities, eq(quantities.id, records.quantityId))
        .where(and(eq(materials.key, demo.record.material), eq(quantities.key, demo.record.quantity), eq(records.conditionKey, demo.record.conditionKey)));
      if (!record) throw new Error(`demo record ${JSON.stringify(demo.record)} is missing: load the registry first`);
      Object.assign(payload, { recordId: String(record.id), material: demo.record.material, quantity: demo.record.quantity });
    }
    const check = validateProposal(payload, catalogue);
    if (demo.state !== "draft" && !check.ok) throw new Error(`demo proposal by ${demo.author}: ${JSON.stringify(check.errors)}`);
    const material = catalogue.materials.find((m) => m.key === payload.material);
    const [q] = await d.select({ id: quantities.id, unit: quantities.canonicalUnit }).from(quantities).where(eq(quantities.key, String(payload.quantity)));
    const prepared = check.ok ? check.proposal.prepared : null;
    const submittedAt = demo.state === "draft" ? null : ago(demo.daysAgo);
    const decidedAt = demo.decision ? ago(demo.decision.daysAgo) : null;
    const [{ id }] = await d
      .insert(proposals)
      .values({
        kind: check.payload.kind, state: demo.state, authorId: author.id, recordId: record?.id ?? null, baseRevisionId: record?.currentRevisionId ?? null,
        materialId: material?.id ?? record?.materialId ?? null, quantityId: q?.id ?? null, payload: check.payload,
        proposedValue: prepared?.value ?? null, proposedUnit: prepared ? q.unit : null,
        decidedBy: demo.decision ? person(demo.decision.by).id : null, decidedAt, reason: demo.decision?.reason ?? null,
        version: demo.state === "rejected" ? 3 : demo.state === "submitted" ? 2 : 1,
        createdAt: ago(demo.daysAgo + 1), updatedAt: decidedAt ?? submittedAt ?? ago(demo.daysAgo), submittedAt,
      })
      .$returningId();
    for (const c of demo.comments ?? []) {
      await d.insert(proposalComments).values({ proposalId: id, authorId: person(c.by).id, body: c.body, createdAt: ago(c.daysAgo) });
    }
    // Hanna takes a daily digest: her notices of the open proposals wait for `npm run digest`.
    if (demo.state === "submitted") {
      const [facts] = await loadFacts(d, [id]);
      const link = new URL(`/proposals/${id}`, process.env.BANDLEDGER_PUBLIC_URL ?? "http://127.0.0.1:3000").toString();
      const content = submittedNotice(summaryOf(facts), facts.authorName, link);
      await d.insert(notices).values({ userId: person("hanna.lindqvist").id, ...content, createdAt: submittedAt! });
    }
  }
}

import { and, asc, count, desc, eq, inArray, sql } from "drizzle-orm";
import { parseReleaseJson, type ReleaseItem } from "~/domain/release-format";
import { db } from "../db/client";
import { parameterSets, releaseItems, releases, setMembers, setWatches, users } from "../db/schema";
import type { Executor } from "../registry/executor";
import { SetError } from "./errors";
import { currentRowsOf, hasCurrentApprovedValue, toReleaseItem, type ItemRow } from "./items";

export type SetRow = typeof parameterSets.$inferSelect;

export type ReleaseSummary = {
  id: number;
  number: number;
  sha256: string;
  csvSha256: string;
  itemCount: number;
  codataEdition: string;
  softwareVersion: string;
  frozenBy: string;
  frozenAt: string;
  downloads: { json: string; csv: string };
};

export type SetSummary = {
  id: number;
  slug: string;
  name: string;
  purpose: string;
  description: string | null;
  version: number;
  memberCount: number;
  latestRelease: ReleaseSummary | null;
};

export function downloadPath(slug: string, number: number, format: "json" | "csv"): string {
  return `/sets/${slug}/releases/${number}.${format}`;
}

const releaseColumns = {
  id: releases.id,
  setId: releases.setId,
  number: releases.number,
  sha256: releases.sha256,
  csvSha256: releases.csvSha256,
  itemCount: releases.itemCount,
  codataEdition: releases.codataEdition,
  softwareVersion: releases.softwareVersion,
  frozenAt: releases.frozenAt,
  frozenBy: users.name,
};

type ReleaseRow = { id: number; setId: number; number: number; sha256: string; csvSha256: string; itemCount: number; codataEdition: string; softwareVersion: string; frozenAt: Date; frozenBy: string | null };

function toSummary(slug: string, r: ReleaseRow): ReleaseSummary {
  return {
    id: r.id,
    number: r.number,
    sha256: r.sha256,
    csvSha256: r.csvSha256,
    itemCount: r.itemCount,
    codataEdition: r.codataEdition,
    softwareVersion: r.softwareVersion,
    frozenBy: r.frozenBy ?? "unknown",
    frozenAt: r.frozenAt.toISOString(),
    downloads: { json: downloadPath(slug, r.number, "json"), csv: downloadPath(slug, r.number, "csv") },
  };
}

export async function findSet(slug: string, ex: Executor = db()): Promise<SetRow | null> {
  const [row] = await ex.select().from(parameterSets).where(eq(parameterSets.slug, slug)).limit(1);
  return row ?? null;
}

export async function requireSet(slug: string, ex: Executor = db()): Promise<SetRow> {
  const set = await findSet(slug, ex);
  if (!set) throw new SetError("not_found", `There is no parameter set "${slug}".`);
  return set;
}

/** Releases of a set, newest first. */
export async function listReleases(set: Pick<SetRow, "id" | "slug">, ex: Executor = db()): Promise<ReleaseSummary[]> {
  const rows = await ex
    .select(releaseColumns)
    .from(releases)
    .leftJoin(users, eq(users.id, releases.frozenBy))
    .where(eq(releases.setId, set.id))
    .orderBy(desc(releases.number));
  return rows.map((r) => toSummary(set.slug, r));
}

/** Every set in name order with its member count and latest release. */
export async function listSets(ex: Executor = db()): Promise<SetSummary[]> {
  const sets = await ex.select().from(parameterSets).orderBy(asc(parameterSets.name), asc(parameterSets.id));
  if (sets.length === 0) return [];
  const ids = sets.map((s) => s.id);
  const [counts, latest] = await Promise.all([
    ex.select({ setId: setMembers.setId, n: count() }).from(setMembers).where(inArray(setMembers.setId, ids)).groupBy(setMembers.setId),
    ex
      .select(releaseColumns)
      .from(releases)
      .leftJoin(users, eq(users.id, releases.frozenBy))
      .where(sql`(${releases.setId}, ${releases.number}) IN (SELECT set_id, MAX(number) FROM releases GROUP BY set_id)`),
  ]);
  const countOf = new Map(counts.map((c) => [c.setId, Number(c.n)]));
  const latestOf = new Map(latest.map((r) => [r.setId, r]));
  return sets.map((s) => ({
    id: s.id,
    slug: s.slug,
    name: s.name,
    purpose: s.purpose,
    description: s.description,
    version: s.version,
    memberCount: countOf.get(s.id) ?? 0,
    latestRelease: latestOf.has(s.id) ? toSummary(s.slug, latestOf.get(s.id)!) : null,
  }));
}

export type StoredRelease = ReleaseSummary & { setId: number; canonicalJson: string; csv: string };

export async function findRelease(set: Pick<SetRow, "id" | "slug">, number: number, ex: Executor = db()): Promise<StoredRelease | null> {
  const [row] = await ex
    .select({ ...releaseColumns, canonicalJson: releases.canonicalJson, csv: releases.csv })
    .from(releases)
    .leftJoin(users, eq(users.id, releases.frozenBy))
    .where(and(eq(releases.setId, set.id), eq(releases.number, number)))
    .limit(1);
  if (!row) return null;
  return { ...toSummary(set.slug, row), setId: row.setId, canonicalJson: row.canonicalJson, csv: row.csv };
}

export async function requireRelease(set: Pick<SetRow, "id" | "slug" | "name">, number: number, ex: Executor = db()): Promise<StoredRelease> {
  const release = await findRelease(set, number, ex);
  if (!release) throw new SetError("not_found", `${set.name} has no release ${number}.`);
  return release;
}

/** The items a release pinned, read from the bytes it serves (so a page shows exactly what a download holds). */
export function itemsOfRelease(release: Pick<StoredRelease, "canonicalJson">): ReleaseItem[] {
  return parseReleaseJson(release.canonicalJson).content.items;
}

export type MemberView = {
  recordId: number;
  material: { key: string; name: string };
  quantity: { key: string; symbol: string; name: string };
  status: "active" | "retired";
  familyId: number;
  current: ReleaseItem | null;
  sinceLastRelease: "new" | "changed" | "unchanged" | "retired" | null;
  /** The revision the latest release pinned, when it holds this record. */
  releasedRevisionId: number | null;
};

async function latestPins(setId: number, ex: Executor): Promise<{ number: number; pins: Map<number, number> } | null> {
  const [latest] = await ex.select({ id: releases.id, number: releases.number }).from(releases).where(eq(releases.setId, setId)).orderBy(desc(releases.number)).limit(1);
  if (!latest) return null;
  const rows = await ex.select({ recordId: releaseItems.recordId, revisionId: releaseItems.revisionId }).from(releaseItems).where(eq(releaseItems.releaseId, latest.id));
  return { number: latest.number, pins: new Map(rows.map((r) => [r.recordId, r.revisionId])) };
}

export async function memberRecordIds(setId: number, ex: Executor = db()): Promise<number[]> {
  const rows = await ex.select({ recordId: setMembers.recordId }).from(setMembers).where(eq(setMembers.setId, setId));
  return rows.map((r) => r.recordId);
}

export function memberViewOf(row: ItemRow, last: { pins: Map<number, number> } | null): MemberView {
  const eligible = hasCurrentApprovedValue(row);
  const released = last?.pins.get(row.recordId) ?? null;
  let since: MemberView["sinceLastRelease"] = null;
  if (last) {
    if (!eligible) since = "retired";
    else if (released === null) since = "new";
    else since = released === row.revisionId ? "unchanged" : "changed";
  }
  return {
    recordId: row.recordId,
    material: { key: row.materialKey, name: row.materialName },
    quantity: { key: row.quantityKey, symbol: row.quantitySymbol, name: row.quantityName },
    status: row.recordStatus,
    familyId: row.familyId,
    current: eligible ? toReleaseItem(row) : null,
    sinceLastRelease: since,
    releasedRevisionId: released,
  };
}

export type SetView = {
  set: SetSummary;
  members: MemberView[];
  /** Records the latest release holds that are no longer members. */
  droppedSinceLastRelease: { recordId: number; revisionId: number }[];
  releases: ReleaseSummary[];
  lastReleaseNumber: number | null;
};

/** A set with its members (each marked against the latest release), its releases, newest first. */
export async function loadSetView(slug: string, ex: Executor = db()): Promise<SetView> {
  const set = await requireSet(slug, ex);
  const [ids, last, releaseList] = await Promise.all([memberRecordIds(set.id, ex), latestPins(set.id, ex), listReleases(set, ex)]);
  const rows = await currentRowsOf(ex, ids);
  const members = rows.map((r) => memberViewOf(r, last));
  const memberSet = new Set(ids);
  const dropped = last ? [...last.pins].filter(([recordId]) => !memberSet.has(recordId)).map(([recordId, revisionId]) => ({ recordId, revisionId })) : [];
  return {
    set: {
      id: set.id, slug: set.slug, name: set.name, purpose: set.purpose, description: set.description, version: set.version,
      memberCount: ids.length, latestRelease: releaseList[0] ?? null,
    },
    members,
    droppedSinceLastRelease: dropped,
    releases: releaseList,
    lastReleaseNumber: last?.number ?? null,
  };
}

export async function getsReleaseNotices(setId: number, userId: number, ex: Executor = db()): Promise<boolean> {
  const [row] = await ex.select({ userId: setWatches.userId }).from(setWatches).where(and(eq(setWatches.setId, setId), eq(setWatches.userId, userId))).limit(1);
  return Boolean(row);
}

export async function releaseNoticeRecipients(setId: number, ex: Executor = db()): Promise<{ id: number; email: string; name: string; notifyMode: "immediate" | "digest" }[]> {
  return ex
    .select({ id: users.id, email: users.email, name: users.name, notifyMode: users.notifyMode })
    .from(setWatches)
    .innerJoin(users, eq(users.id, setWatches.userId))
    .where(and(eq(setWatches.setId, setId), eq(users.active, true)))
    .orderBy(asc(users.id));
}

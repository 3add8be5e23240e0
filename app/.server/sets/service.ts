import { and, eq, sql } from "drizzle-orm";
import { CODATA_EDITION } from "~/domain/physics/constants";
import { RELEASE_SCHEMA, RELEASE_SCHEMA_VERSION, serialiseRelease, type ReleaseContent } from "~/domain/release-format";
import { setInputSchema, slugFromName, type SetInput } from "~/domain/api-schemas";
import packageJson from "../../../package.json";
import { audit } from "../audit";
import { db } from "../db/client";
import { materialFamilies, parameterSets, releaseItems, releases, setMembers, setWatches } from "../db/schema";
import { hasRole, type CurrentUser } from "../permissions";
import type { Executor, Tx } from "../registry/executor";
import { isDuplicateKey } from "../registry/records";
import { SetError } from "./errors";
import { currentRowsOf, eligibleRows, hasCurrentApprovedValue, loadPinnedItems, toReleaseItem, type Pin } from "./items";
import { memberRecordIds, requireSet, type SetRow } from "./queries";
import { sendReleaseNotices } from "./notify";

export const SOFTWARE_VERSION: string = packageJson.version;

const actorOf = (u: CurrentUser) => ({ id: u.id, email: u.email });

function requireContributor(user: CurrentUser) {
  if (!hasRole(user, "contributor")) throw new SetError("forbidden", "Contributors, leads and admins compose sets; readers read and download them.");
}

function requireFreezer(user: CurrentUser) {
  if (!hasRole(user, "lead")) throw new SetError("forbidden", "Only a lead or an admin freezes a set.");
}

export type FieldErrors = Partial<Record<keyof SetInput, string>>;

/** Creates a draft set; the short name comes from the name unless one is given. */
export async function createSet(actor: CurrentUser, raw: unknown, request: Request | null): Promise<{ ok: true; set: SetRow } | { ok: false; errors: FieldErrors }> {
  requireContributor(actor);
  const parsed = setInputSchema.safeParse(raw);
  if (!parsed.success) {
    const errors: FieldErrors = {};
    for (const issue of parsed.error.issues) errors[issue.path[0] as keyof SetInput] ??= issue.message;
    return { ok: false, errors };
  }
  const input = parsed.data;
  const slug = input.slug ?? slugFromName(input.name);
  if (!slug) return { ok: false, errors: { slug: "Give a short name of letters and digits for the address." } };
  try {
    await db().insert(parameterSets).values({ slug, name: input.name, purpose: input.purpose, description: input.description ?? null, createdBy: actor.id });
  } catch (e) {
    if (isDuplicateKey(e)) return { ok: false, errors: { slug: `A set with the short name "${slug}" exists already; choose another.` } };
    throw e;
  }
  const set = await requireSet(slug);
  await audit(actorOf(actor), "set.created", { type: "parameter_set", id: set.id }, request, { slug, name: set.name });
  return { ok: true, set };
}

async function bumpVersion(tx: Tx, setId: number, expectedVersion?: number): Promise<void> {
  const [result] = await tx
    .update(parameterSets)
    .set({ version: sql`${parameterSets.version} + 1` })
    .where(expectedVersion === undefined ? eq(parameterSets.id, setId) : and(eq(parameterSets.id, setId), eq(parameterSets.version, expectedVersion)));
  if (result.affectedRows === 0) {
    throw new SetError("conflict", "The set changed since you opened it (someone edited or froze it). Reload the page, check the members and try again.");
  }
}

/** Adds one record; only a record with a current approved value may join. */
export async function addMember(actor: CurrentUser, slug: string, recordId: number, request: Request | null): Promise<{ added: boolean }> {
  requireContributor(actor);
  const set = await requireSet(slug);
  const [row] = await currentRowsOf(db(), [recordId]);
  if (!row) throw new SetError("not_found", `There is no record ${recordId}.`, "recordId");
  if (!hasCurrentApprovedValue(row)) throw new SetError("not_eligible", `Record ${recordId} has no current approved value (it is retired); only current values go into a set.`, "recordId");
  const added = await db().transaction(async (tx) => {
    const [result] = await tx.insert(setMembers).ignore().values({ setId: set.id, recordId, addedBy: actor.id });
    if (result.affectedRows === 0) return false;
    await bumpVersion(tx, set.id);
    return true;
  });
  if (added) await audit(actorOf(actor), "set.member_added", { type: "parameter_set", id: set.id }, request, { slug, recordIds: [recordId] });
  return { added };
}

export type MemberFilter = { family?: string; material?: string; quantity?: string; valley?: "G" | "X" | "L" };

async function familyIdOf(key: string | undefined, ex: Executor = db()): Promise<number | undefined> {
  if (!key) return undefined;
  const [family] = await ex.select({ id: materialFamilies.id }).from(materialFamilies).where(eq(materialFamilies.key, key));
  if (!family) throw new SetError("not_found", `There is no material family "${key}".`, "family");
  return family.id;
}

/** Adds every record with a current approved value that matches the filter; at least one criterion is needed. */
export async function addMembersByFilter(actor: CurrentUser, slug: string, filter: MemberFilter, request: Request | null): Promise<{ added: number; matched: number }> {
  requireContributor(actor);
  if (!filter.family && !filter.material && !filter.quantity && !filter.valley) {
    throw new SetError("invalid", "Choose at least a family, a material, a quantity or a valley to add by filter.", "filter");
  }
  const set = await requireSet(slug);
  const rows = await eligibleRows(db(), { familyId: await familyIdOf(filter.family), materialKey: filter.material, quantityKey: filter.quantity, valley: filter.valley });
  const added = await db().transaction(async (tx) => {
    let n = 0;
    const ids: number[] = [];
    for (const r of rows) {
      const [result] = await tx.insert(setMembers).ignore().values({ setId: set.id, recordId: r.recordId, addedBy: actor.id });
      if (result.affectedRows > 0) {
        n++;
        ids.push(r.recordId);
      }
    }
    if (n > 0) await bumpVersion(tx, set.id);
    return ids;
  });
  if (added.length) await audit(actorOf(actor), "set.member_added", { type: "parameter_set", id: set.id }, request, { slug, recordIds: added, filter });
  return { added: added.length, matched: rows.length };
}

export async function removeMember(actor: CurrentUser, slug: string, recordId: number, request: Request | null): Promise<{ removed: boolean }> {
  requireContributor(actor);
  const set = await requireSet(slug);
  const removed = await db().transaction(async (tx) => {
    const [result] = await tx.delete(setMembers).where(and(eq(setMembers.setId, set.id), eq(setMembers.recordId, recordId)));
    if (result.affectedRows === 0) return false;
    await bumpVersion(tx, set.id);
    return true;
  });
  if (removed) await audit(actorOf(actor), "set.member_removed", { type: "parameter_set", id: set.id }, request, { slug, recordIds: [recordId] });
  return { removed };
}

export type WrittenRelease = { releaseId: number; number: number; sha256: string; csvSha256: string; itemCount: number; frozenAt: Date };

/**
 * Writes release `number` of a set with exactly these pins, inside the caller's transaction: the canonical JSON and
 * CSV bytes, their hashes and one row per pin. The triggers of drizzle/0001 keep both tables append-only.
 */
export async function writeRelease(
  tx: Tx,
  input: { set: Pick<SetRow, "id" | "slug" | "name" | "purpose" | "description">; number: number; pins: Pin[]; frozenBy: { id: number; name: string }; frozenAt: Date },
): Promise<WrittenRelease> {
  const items = await loadPinnedItems(tx, input.pins);
  const frozenAt = new Date(Math.floor(input.frozenAt.getTime()));
  const content: ReleaseContent = {
    schema: RELEASE_SCHEMA,
    schemaVersion: RELEASE_SCHEMA_VERSION,
    set: { slug: input.set.slug, name: input.set.name, purpose: input.set.purpose, description: input.set.description?.trim() ? input.set.description : null },
    release: {
      number: input.number,
      frozenAt: frozenAt.toISOString(),
      frozenBy: input.frozenBy.name,
      codataEdition: CODATA_EDITION,
      softwareVersion: SOFTWARE_VERSION,
      itemCount: items.length,
    },
    items,
  };
  const out = await serialiseRelease(content);
  await requireFitsOnePacket(tx, input, out.json, out.csv, items.length);
  let releaseId: number;
  try {
    [{ id: releaseId }] = await tx
      .insert(releases)
      .values({
        setId: input.set.id,
        number: input.number,
        sha256: out.sha256,
        canonicalJson: out.json,
        csv: out.csv,
        csvSha256: out.csvSha256,
        itemCount: items.length,
        codataEdition: CODATA_EDITION,
        softwareVersion: SOFTWARE_VERSION,
        frozenBy: input.frozenBy.id,
        frozenAt,
      })
      .$returningId();
  } catch (e) {
    if (isDuplicateKey(e)) throw new SetError("conflict", `Release ${input.number} of ${input.set.name} was frozen at the same moment by someone else. Reload to see it.`);
    throw e;
  }
  if (items.length) await tx.insert(releaseItems).values(items.map((i) => ({ releaseId, recordId: i.recordId, revisionId: i.revisionId })));
  return { releaseId, number: input.number, sha256: out.sha256, csvSha256: out.csvSha256, itemCount: items.length, frozenAt };
}

// The bytes as they travel in the INSERT: quotes, backslashes and control characters are escaped.
const escapedBytes = (text: string) => Buffer.byteLength(text) + (text.match(/[\0\b\t\n\r\x1a"'\\]/g)?.length ?? 0);

/**
 * A release is one INSERT of its JSON and CSV; over the server's max_allowed_packet the server drops the connection,
 * which looks like a database outage. Refuse it with its size instead.
 */
async function requireFitsOnePacket(tx: Tx, input: { set: { name: string }; number: number }, json: string, csv: string, itemCount: number): Promise<void> {
  const [rows] = (await tx.execute(sql`SELECT @@max_allowed_packet AS max`)) as unknown as [{ max: number | string }[]];
  const limit = Number(rows[0].max) - 64 * 1024;
  const size = escapedBytes(json) + escapedBytes(csv);
  if (size <= limit) return;
  const mib = (n: number) => (n / 1048576).toFixed(1);
  throw new SetError("invalid", `Release ${input.number} of ${input.set.name} would be ${mib(size)} MiB (${itemCount} values); the database takes at most ${mib(limit)} MiB in one release. Split the set into smaller sets, or raise the database's max_allowed_packet.`);
}

async function nextReleaseNumber(tx: Tx, setId: number): Promise<number> {
  // A locking read: the newest committed number, not the one this transaction's snapshot remembers.
  const [rows] = (await tx.execute(sql`SELECT COALESCE(MAX(number), 0) AS last FROM releases WHERE set_id = ${setId} FOR UPDATE`)) as unknown as [{ last: number | string }[]];
  return Number(rows[0].last) + 1;
}

/**
 * Freezes the set's members at their current approved revisions into the next release, in one transaction. With
 * `expectedVersion` (what the page showed) any edit or freeze since then is a conflict; without it, concurrent
 * freezes queue on the set's row and get consecutive numbers. Everyone who gets its release notices gets an e-mail with the comparison.
 */
export async function freezeSet(actor: CurrentUser, slug: string, options: { expectedVersion?: number }, request: Request | null): Promise<WrittenRelease> {
  requireFreezer(actor);
  const set = await requireSet(slug);
  const written = await db().transaction(async (tx) => {
    // First statement of the transaction: it takes the set's row lock before anything is read.
    await bumpVersion(tx, set.id, options.expectedVersion);
    const [locked] = await tx.select().from(parameterSets).where(eq(parameterSets.id, set.id));
    const rows = await currentRowsOf(tx, await memberRecordIds(set.id, tx));
    if (rows.length === 0) throw new SetError("invalid", "The set has no members yet; add records before freezing it.");
    const blocked = rows.filter((r) => !hasCurrentApprovedValue(r));
    if (blocked.length) {
      throw new SetError("not_eligible", `Remove the records without a current approved value first: ${blocked.map((r) => `#${r.recordId} ${r.materialKey} ${r.quantitySymbol}`).join(", ")}.`, null, { recordIds: blocked.map((r) => r.recordId) });
    }
    const number = await nextReleaseNumber(tx, set.id);
    return writeRelease(tx, { set: locked, number, pins: rows.map((r) => ({ recordId: r.recordId, revisionId: r.revisionId! })), frozenBy: { id: actor.id, name: actor.name }, frozenAt: new Date() });
  });
  await audit(actorOf(actor), "set.frozen", { type: "release", id: written.releaseId }, request, { slug, number: written.number, sha256: written.sha256, itemCount: written.itemCount });
  await sendReleaseNotices(slug, written.number, actor.id).catch((e) => console.error("freeze notice not sent:", e));
  return written;
}

export async function setReleaseNotices(actor: CurrentUser, slug: string, on: boolean, request: Request | null): Promise<{ changed: boolean }> {
  const set = await requireSet(slug);
  const [result] = on
    ? await db().insert(setWatches).ignore().values({ setId: set.id, userId: actor.id })
    : await db().delete(setWatches).where(and(eq(setWatches.setId, set.id), eq(setWatches.userId, actor.id)));
  const changed = result.affectedRows > 0;
  if (changed) await audit(actorOf(actor), on ? "set.notices_on" : "set.notices_off", { type: "parameter_set", id: set.id }, request, { slug });
  return { changed };
}

/** Records that could join (current approved values matching the filter) and are not members yet. */
export async function candidateRows(slug: string, filter: MemberFilter, limit = 200, ex: Executor = db()) {
  const set = await requireSet(slug, ex);
  const members = new Set(await memberRecordIds(set.id, ex));
  const rows = await eligibleRows(ex, { familyId: await familyIdOf(filter.family, ex), materialKey: filter.material, quantityKey: filter.quantity, valley: filter.valley });
  const open = rows.filter((r) => !members.has(r.recordId));
  return { items: open.slice(0, limit).map(toReleaseItem), total: open.length };
}

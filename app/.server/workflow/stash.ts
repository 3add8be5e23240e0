import { createHash, randomBytes } from "node:crypto";
import { and, count, eq, gt, lt, sql } from "drizzle-orm";
import { createCookie } from "react-router";
import { readProposalPayload, type ProposalPayload } from "~/domain/proposal-schemas";
import { clientAddress } from "../auth/client-address";
import { db } from "../db/client";
import { draftStashes, proposals } from "../db/schema";
import { env } from "../env";
import type { CurrentUser } from "../permissions";
import { affectedRows, createDraft, saveDraft } from "./proposals";

const STASH_MINUTES = 60;
// A stash is written without a session, so it is bounded: what a proposal form can hold, not arbitrary data.
const MAX_STASH_CHARS = 200_000;

let cookie: ReturnType<typeof createCookie> | undefined;
function stashCookie() {
  cookie ??= createCookie("__bandledger_kept", {
    httpOnly: true,
    sameSite: "lax",
    path: "/",
    secure: env().BANDLEDGER_PUBLIC_URL.startsWith("https://"),
    secrets: [env().sessionSecret],
    maxAge: STASH_MINUTES * 60,
  });
  return cookie;
}

const digest = (key: string) => createHash("sha256").update(key).digest("hex");

// Anonymous writes are bounded: so many kept forms per client address within their hour, so many in all.
export const STASHES_PER_ADDRESS = 20;
export const MAX_STASHES = 10_000;

export type StashResult = { kept: true; setCookie: string } | { kept: false; setCookie: null };

/**
 * Keeps a proposal form posted after its session ran out: the payload goes to the database under a random key,
 * and the browser gets that key in a short-lived signed cookie (a browser that already holds one keeps its key,
 * so repeated autosaves overwrite one stash). A new stash is refused past the per-address limit or the table's cap.
 */
export async function stashPayload(request: Request, payload: ProposalPayload, proposalId: number | null): Promise<StashResult> {
  let kept = payload;
  if (JSON.stringify(kept).length > MAX_STASH_CHARS) kept = readProposalPayload({ ...payload, source: { ...payload.source, bibtex: payload.source.bibtex.slice(0, 20_000) }, notes: payload.notes.slice(0, 4_000) });
  const held = await stashCookie().parse(request.headers.get("Cookie"));
  if (typeof held === "string" && held !== "") {
    const updated = await db()
      .update(draftStashes)
      .set({ payload: kept, proposalId, expiresAt: sql`NOW(3) + INTERVAL ${STASH_MINUTES} MINUTE` })
      .where(and(eq(draftStashes.id, digest(held)), gt(draftStashes.expiresAt, sql`NOW(3)`)));
    if (affectedRows(updated) > 0) return { kept: true, setCookie: await stashCookie().serialize(held) };
  }
  const ip = clientAddress(request);
  const key = randomBytes(32).toString("base64url");
  await db().delete(draftStashes).where(lt(draftStashes.expiresAt, sql`NOW(3)`));
  // Written first, then counted with the others: two posts racing for the last place cannot both keep theirs.
  await db().insert(draftStashes).values({ id: digest(key), proposalId, payload: kept, ip, expiresAt: sql`NOW(3) + INTERVAL ${STASH_MINUTES} MINUTE` });
  const live = gt(draftStashes.expiresAt, sql`NOW(3)`);
  const [[mine], [all]] = await Promise.all([
    db().select({ n: count() }).from(draftStashes).where(and(eq(draftStashes.ip, ip), live)),
    db().select({ n: count() }).from(draftStashes).where(live),
  ]);
  if (Number(mine.n) > STASHES_PER_ADDRESS || Number(all.n) > MAX_STASHES) {
    await db().delete(draftStashes).where(eq(draftStashes.id, digest(key)));
    return { kept: false, setCookie: null };
  }
  return { kept: true, setCookie: await stashCookie().serialize(key) };
}

/**
 * After sign-in: puts a kept payload back into the draft it came from (when this person wrote it and it is still
 * a draft) or into a new draft of theirs. The stash is used once. Returns the draft's id, or null when nothing waits.
 */
export async function restoreStash(request: Request, actor: Pick<CurrentUser, "id" | "email" | "name" | "role" | "leadFamilyIds">): Promise<{ proposalId: number | null; setCookie: string }> {
  const setCookie = await stashCookie().serialize("", { maxAge: 0 });
  const key = await stashCookie().parse(request.headers.get("Cookie"));
  if (typeof key !== "string" || key === "") return { proposalId: null, setCookie };
  const id = digest(key);
  const [stash] = await db().select().from(draftStashes).where(and(eq(draftStashes.id, id), gt(draftStashes.expiresAt, sql`NOW(3)`)));
  await db().delete(draftStashes).where(eq(draftStashes.id, id));
  if (!stash) return { proposalId: null, setCookie };
  const payload = readProposalPayload(stash.payload);
  if (stash.proposalId !== null) {
    const [row] = await db().select({ authorId: proposals.authorId, state: proposals.state }).from(proposals).where(eq(proposals.id, stash.proposalId));
    if (row && row.authorId === actor.id && row.state === "draft") {
      await saveDraft(actor, stash.proposalId, payload);
      return { proposalId: stash.proposalId, setCookie };
    }
  }
  return { proposalId: await createDraft(actor, payload, request), setCookie };
}

import { and, eq } from "drizzle-orm";
import { audit } from "../audit";
import { db } from "../db/client";
import { attachments, proposals } from "../db/schema";
import type { CurrentUser } from "../permissions";
import { readStoredFile, storeFile } from "../storage";
import { WorkflowError } from "./errors";
import { loadOneFact } from "./facts";
import { isInvolved } from "./proposals";

type Actor = Pick<CurrentUser, "id" | "email" | "name" | "role" | "leadFamilyIds">;

const MAX_FILE_NAME = 200;

function cleanFileName(name: string): string {
  const base = name.split(/[\\/]/).pop() ?? "file";
  const cleaned = base.normalize("NFC").replace(/[\u0000-\u001f\u007f"]/g, "").trim();
  return (cleaned || "file").slice(-MAX_FILE_NAME);
}

/**
 * Keeps a file with an open proposal of its author: a PDF of the source or a measurement file (CSV or text),
 * checked by content and stored content-addressed.
 */
export async function attachFile(actor: Actor, proposalId: number, file: File, request: Request | null = null): Promise<number> {
  const [row] = await db().select().from(proposals).where(eq(proposals.id, proposalId));
  if (!row || row.authorId !== actor.id) throw new WorkflowError("not_found", "There is no such proposal.");
  if (row.state !== "draft" && row.state !== "submitted") throw new WorkflowError("state", `This proposal is ${row.state}; files are attached while it is open.`);
  const fileName = cleanFileName(file.name);
  const stored = await storeFile(new Uint8Array(await file.arrayBuffer()), { fileName, allowed: ["pdf", "csv", "text"] });
  const [{ id }] = await db()
    .insert(attachments)
    .values({ proposalId, sha256: stored.sha256, fileName, contentType: stored.contentType, sizeBytes: stored.sizeBytes, uploadedBy: actor.id })
    .$returningId();
  await audit(actor, "proposal.upload", { type: "proposal", id: proposalId }, request, { attachmentId: id, fileName, sha256: stored.sha256, sizeBytes: stored.sizeBytes });
  return id;
}

/** An attachment's bytes for someone involved in its proposal. */
export async function readAttachment(actor: Actor, proposalId: number, attachmentId: number) {
  const facts = await loadOneFact(db(), proposalId);
  if (!facts || !(await isInvolved(db(), actor, facts))) throw new WorkflowError("not_found", "There is no such file.");
  const [a] = await db().select().from(attachments).where(and(eq(attachments.id, attachmentId), eq(attachments.proposalId, proposalId)));
  if (!a) throw new WorkflowError("not_found", "There is no such file.");
  return { fileName: a.fileName, contentType: a.contentType, bytes: await readStoredFile(a.sha256) };
}

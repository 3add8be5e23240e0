import { data, redirect } from "react-router";
import { payloadFromFormData, type ProposalFieldErrors, type ProposalPayload } from "~/domain/proposal-schemas";
import { getOptionalUser, hasRole, forbidden } from "../permissions";
import { redirectWithFlash } from "../session";
import { readLimitedFormData, StorageError } from "../storage";
import { isWorkflowError, statusOf } from "./errors";
import { createDraft, draftSavedAt, saveDraft, submitProposal } from "./proposals";
import { stashPayload } from "./stash";

// A proposal form with a pasted BibTeX entry and long notes stays far below this.
const MAX_FORM_BYTES = 512 * 1024;

export type ProposalFormResult = {
  intent: string;
  proposalId: number | null;
  payload: ProposalPayload | null;
  errors: ProposalFieldErrors;
  message: string | null;
  savedAt: string | null;
  sessionExpired: boolean;
};

const result = (r: Partial<ProposalFormResult>): ProposalFormResult => ({
  intent: "", proposalId: null, payload: null, errors: {}, message: null, savedAt: null, sessionExpired: false, ...r,
});

/**
 * The action of the proposal form (new and edit): autosave, save, submit. The payload is saved before anything is
 * checked, so a refused submission keeps what was typed; a form posted after the session ran out is kept in a
 * stash and put back into the draft after sign-in.
 */
export async function proposalFormAction(request: Request, draftId: number | null) {
  let form: FormData;
  try {
    form = await readLimitedFormData(request, MAX_FORM_BYTES);
  } catch (e) {
    if (e instanceof StorageError) return data(result({ message: e.message }), { status: 413 });
    throw e;
  }
  const intent = String(form.get("intent") ?? "");
  const payload = payloadFromFormData(form);
  const postedId = Number(form.get("proposalId") ?? "");
  const proposalId = draftId ?? (Number.isInteger(postedId) && postedId > 0 ? postedId : null);
  const user = await getOptionalUser(request);
  if (!user) {
    const stash = await stashPayload(request, payload, proposalId);
    if (!stash.kept) {
      const message = "Your session has ended, and this network has left too many unsigned forms for one more to be kept. Sign in again in another tab, then save this form again: it is still on this page.";
      return data(result({ intent, proposalId, payload, sessionExpired: true, message }), { status: 429 });
    }
    const signIn = `/sign-in?returnTo=${encodeURIComponent("/proposals/restore")}`;
    const headers = { "Set-Cookie": stash.setCookie };
    if (intent === "autosave") return data(result({ intent, proposalId, sessionExpired: true, message: "Your session has ended. What you typed is kept: sign in again and it comes back." }), { status: 401, headers });
    throw redirect(signIn, { headers });
  }
  if (!hasRole(user, "contributor")) forbidden("Proposing needs the contributor role.");
  if (!["autosave", "save", "submit"].includes(intent)) return data(result({ intent, proposalId, payload, message: "Unknown request." }), { status: 400 });
  let id = proposalId;
  try {
    id ??= await createDraft(user, payload, request);
    if (intent === "submit") {
      await submitProposal(user, id, payload, request);
      return redirectWithFlash(request, `/proposals/${id}`, { kind: "ok", message: "Submitted for a decision: the leads of the family have been told." });
    }
    const saved = proposalId === null ? { savedAt: new Date() } : await saveDraft(user, id, payload);
    if (intent === "autosave") return data(result({ intent, proposalId: id, savedAt: saved.savedAt.toISOString() }));
    return redirectWithFlash(request, `/proposals/${id}/edit`, { kind: "ok", message: "Draft saved." });
  } catch (e) {
    if (!isWorkflowError(e)) throw e;
    // A refused submission has saved what was typed first: the answer says when, so the form can say so.
    const savedAt = id !== null ? await draftSavedAt(user, id) : null;
    return data(result({ intent, proposalId: id, payload, errors: e.details.fieldErrors ?? {}, message: e.message, savedAt: savedAt?.toISOString() ?? null }), { status: statusOf(e) });
  }
}

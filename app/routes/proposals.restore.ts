import { redirect } from "react-router";
import type { Route } from "./+types/proposals.restore";
import { requireRole } from "~/.server/permissions";
import { getSession, commitSession } from "~/.server/session";
import { isWorkflowError } from "~/.server/workflow/errors";
import { restoreStash } from "~/.server/workflow/stash";

// After signing in again: what the form held when the session ran out goes back into the draft.
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const session = await getSession(request);
  let target = "/proposals";
  try {
    const { proposalId, setCookie } = await restoreStash(request, user);
    session.flash("flash", proposalId
      ? { kind: "ok", message: "Signed in again: what you had typed is back in the draft. Check it and submit." }
      : { kind: "error", message: "Nothing was waiting to be restored (a kept form lasts an hour)." });
    if (proposalId) target = `/proposals/${proposalId}/edit`;
    const headers = new Headers({ "Set-Cookie": setCookie });
    headers.append("Set-Cookie", await commitSession(session));
    return redirect(target, { headers });
  } catch (e) {
    if (!isWorkflowError(e)) throw e;
    session.flash("flash", { kind: "error", message: `What you had typed could not go back into a draft: ${e.message}` });
    return redirect(target, { headers: { "Set-Cookie": await commitSession(session) } });
  }
}

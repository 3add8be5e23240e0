import type { Route } from "./+types/checks.report";
import { checkReportForPayload } from "~/.server/checks";
import { guardSolveOrRespond } from "~/.server/checks/solve-guard";
import { requireSameOrigin, requireUser } from "~/.server/permissions";
import { MAX_PLAIN_FORM_BYTES, readLimitedBody, readLimitedFormData, StorageError } from "~/.server/storage";
import { payloadFromFormData } from "~/domain/proposal-schemas";

// A proposal-shaped payload (the proposal form's field names) in, its check report out, as JSON.

function formDataOf(params: URLSearchParams): FormData {
  const form = new FormData();
  for (const [name, value] of params) form.append(name, value);
  return form;
}

// After a refused body the rest of it is never read, so the connection is closed rather than reused.
const refusal = (status: number, message: string) => Response.json({ report: null, message }, { status, headers: status === 413 ? { Connection: "close" } : {} });

// The body is read as it arrives and refused past the limit of any form of ours, JSON or not.
async function payloadOf(request: Request): Promise<unknown> {
  if (!(request.headers.get("content-type") ?? "").includes("application/json")) return payloadFromFormData(await readLimitedFormData(request, MAX_PLAIN_FORM_BYTES));
  const text = (await readLimitedBody(request, MAX_PLAIN_FORM_BYTES)).toString("utf8");
  if (text.trim() === "") return {};
  try {
    return JSON.parse(text);
  } catch {
    throw refusal(400, "The body is not valid JSON.");
  }
}

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const payload = payloadFromFormData(formDataOf(new URL(request.url).searchParams));
  return guardSolveOrRespond(user.id, () => checkReportForPayload(payload), "json");
}

export async function action({ request }: Route.ActionArgs) {
  const user = await requireUser(request);
  requireSameOrigin(request);
  try {
    const payload = await payloadOf(request);
    return await guardSolveOrRespond(user.id, () => checkReportForPayload(payload), "json");
  } catch (e) {
    if (e instanceof StorageError) return refusal(413, e.message);
    throw e;
  }
}

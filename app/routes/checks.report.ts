import type { Route } from "./+types/checks.report";
import { checkReportForPayload } from "~/.server/checks";
import { requireSameOrigin, requireUser } from "~/.server/permissions";
import { payloadFromFormData } from "~/domain/proposal-schemas";

// A proposal-shaped payload (the proposal form's field names) in, its check report out, as JSON.

function formDataOf(params: URLSearchParams): FormData {
  const form = new FormData();
  for (const [name, value] of params) form.append(name, value);
  return form;
}

export async function loader({ request }: Route.LoaderArgs) {
  await requireUser(request);
  const payload = payloadFromFormData(formDataOf(new URL(request.url).searchParams));
  return checkReportForPayload(payload);
}

export async function action({ request }: Route.ActionArgs) {
  await requireUser(request);
  requireSameOrigin(request);
  const type = request.headers.get("content-type") ?? "";
  const payload = type.includes("application/json")
    ? await request.json().catch(() => ({}))
    : payloadFromFormData(await request.formData());
  return checkReportForPayload(payload);
}

import type { Route } from "./+types/api.v1.set-releases";
import { freezeBodySchema } from "~/domain/api-schemas";
import { requireApiCaller, requireApiRole, requireSessionWrite } from "~/.server/api/guard";
import { apiError, apiJson, parseJsonBody, runApi } from "~/.server/api/respond";
import { releaseDetail, setDetail } from "~/.server/api/sets";
import { freezeSet } from "~/.server/sets/service";

export async function loader({ request, params }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    const detail = await setDetail(params.slug);
    return apiJson({ releases: detail.releases });
  });
}

// Freezing from the API is for the signed-in browser only: tokens are read-only.
export async function action({ request, params }: Route.ActionArgs) {
  return runApi(async () => {
    if (request.method !== "POST") throw apiError(400, "method_not_allowed", "Only POST freezes a set.", null);
    const caller = await requireApiCaller(request);
    requireSessionWrite(request, caller);
    requireApiRole(caller, "lead");
    const body = await parseJsonBody(freezeBodySchema, request);
    const written = await freezeSet(caller.user, params.slug, { expectedVersion: body.expectedVersion }, request);
    return apiJson(await releaseDetail(params.slug, written.number), { status: 201 });
  });
}

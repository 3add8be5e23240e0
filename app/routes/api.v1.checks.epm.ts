import type { Route } from "./+types/api.v1.checks.epm";
import { epmCheckBodySchema } from "~/domain/api-schemas";
import { runEpmCheck } from "~/.server/api/epm";
import { requireApiCaller } from "~/.server/api/guard";
import { apiError, apiJson, parseJsonBody, runApi } from "~/.server/api/respond";
import { guardSolve } from "~/.server/checks/solve-guard";

export async function loader() {
  return apiError(400, "method_not_allowed", "POST the check as JSON; see /api/v1/openapi.json.", null, { Allow: "POST" });
}

// Read-only computation: it changes nothing, so a token or a session may call it from anywhere.
export async function action({ request }: Route.ActionArgs) {
  return runApi(async () => {
    if (request.method !== "POST") throw apiError(400, "method_not_allowed", "Only POST runs the check.", null, { Allow: "POST" });
    const caller = await requireApiCaller(request);
    return guardSolve(caller.user.id, async () => apiJson(runEpmCheck(await parseJsonBody(epmCheckBodySchema, request))));
  });
}

import type { Route } from "./+types/api.v1.checks.nfe";
import { nfeCheckBodySchema } from "~/domain/api-schemas";
import { requireApiCaller } from "~/.server/api/guard";
import { runNfeCheck } from "~/.server/api/nfe";
import { guardSolve } from "~/.server/checks/solve-guard";
import { apiError, apiJson, parseJsonBody, runApi } from "~/.server/api/respond";

export async function loader() {
  return apiError(400, "method_not_allowed", "POST the check as JSON; see /api/v1/openapi.json.", null, { Allow: "POST" });
}

// Read-only computation: it changes nothing, so a token or a session may call it from anywhere.
export async function action({ request }: Route.ActionArgs) {
  return runApi(async () => {
    if (request.method !== "POST") throw apiError(400, "method_not_allowed", "Only POST runs the check.", null, { Allow: "POST" });
    const caller = await requireApiCaller(request);
    return guardSolve(caller.user.id, async () => apiJson(runNfeCheck(await parseJsonBody(nfeCheckBodySchema, request))));
  });
}

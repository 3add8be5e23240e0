import type { Route } from "./+types/api.v1.release-evaluate";
import { requireApiCaller } from "~/.server/api/guard";
import { apiError, readOnlyEndpoint, runApi } from "~/.server/api/respond";
import { evaluateStoredRelease, evaluationResponse, readEvaluationParams } from "~/.server/sets/evaluate";

// A frozen release evaluated at a temperature (and composition, substrate): the bytes `bandledger evaluate` writes.
export async function loader({ request, params }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    if (!/^\d{1,7}$/.test(params.number) || Number(params.number) < 1) throw apiError(400, "invalid_request", "The release number must be a positive whole number.", "number");
    const read = readEvaluationParams(new URL(request.url).searchParams);
    if (!read.ok) {
      const [field, message] = Object.entries(read.errors)[0];
      throw apiError(400, "invalid_request", message, field === "query" ? null : field);
    }
    const evaluation = await evaluateStoredRelease(params.slug, Number(params.number), read.request.query);
    return evaluationResponse(evaluation, read.request.format);
  });
}

export const action = readOnlyEndpoint;

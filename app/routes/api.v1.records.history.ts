import { z } from "zod";
import type { Route } from "./+types/api.v1.records.history";
import { requireApiCaller } from "~/.server/api/guard";
import { recordHistory } from "~/.server/api/records";
import { apiError, apiJson, readOnlyEndpoint, runApi } from "~/.server/api/respond";

const idParam = z.coerce.number().int().positive().max(2_147_483_647);

export async function loader({ request, params }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    const id = idParam.safeParse(params.id);
    if (!id.success) throw apiError(400, "invalid_request", "The record id must be a positive whole number.", "id");
    return apiJson(await recordHistory(id.data));
  });
}

export const action = readOnlyEndpoint;

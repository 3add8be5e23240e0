import type { Route } from "./+types/api.v1.set-compare";
import { compareQuerySchema } from "~/domain/api-schemas";
import { requireApiCaller } from "~/.server/api/guard";
import { apiJson, parseQuery, readOnlyEndpoint, runApi } from "~/.server/api/respond";
import { compareSet } from "~/.server/sets/compare";

export async function loader({ request, params }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    const { from, to } = parseQuery(compareQuerySchema, request);
    return apiJson(await compareSet(params.slug, from, to));
  });
}

export const action = readOnlyEndpoint;

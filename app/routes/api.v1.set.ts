import type { Route } from "./+types/api.v1.set";
import { requireApiCaller } from "~/.server/api/guard";
import { apiJson, readOnlyEndpoint, runApi } from "~/.server/api/respond";
import { setDetail } from "~/.server/api/sets";

export async function loader({ request, params }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    return apiJson(await setDetail(params.slug));
  });
}

export const action = readOnlyEndpoint;

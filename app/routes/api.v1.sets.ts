import type { Route } from "./+types/api.v1.sets";
import { requireApiCaller } from "~/.server/api/guard";
import { apiJson, readOnlyEndpoint, runApi } from "~/.server/api/respond";
import { setList } from "~/.server/api/sets";

export async function loader({ request }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    return apiJson(await setList());
  });
}

export const action = readOnlyEndpoint;

import type { Route } from "./+types/api.v1.quantities";
import { quantityList } from "~/.server/api/catalogue";
import { requireApiCaller } from "~/.server/api/guard";
import { apiJson, readOnlyEndpoint, runApi } from "~/.server/api/respond";

export async function loader({ request }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    return apiJson(await quantityList());
  });
}

export const action = readOnlyEndpoint;

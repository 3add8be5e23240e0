import type { Route } from "./+types/api.v1.records";
import { recordsQuerySchema } from "~/domain/api-schemas";
import { requireApiCaller } from "~/.server/api/guard";
import { listRecordsPage } from "~/.server/api/records";
import { apiJson, parseQuery, readOnlyEndpoint, runApi } from "~/.server/api/respond";

export async function loader({ request }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    const query = parseQuery(recordsQuerySchema, request);
    return apiJson(await listRecordsPage(query));
  });
}

export const action = readOnlyEndpoint;

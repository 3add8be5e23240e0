import type { Route } from "./+types/api.v1.release-download";
import { downloadQuerySchema } from "~/domain/api-schemas";
import { releaseDownloadResponse } from "~/.server/api/download";
import { requireApiCaller } from "~/.server/api/guard";
import { apiError, parseQuery, readOnlyEndpoint, runApi } from "~/.server/api/respond";

export async function loader({ request, params }: Route.LoaderArgs) {
  return runApi(async () => {
    const caller = await requireApiCaller(request);
    const { format } = parseQuery(downloadQuerySchema, request);
    const raw = params.number;
    if (!/^\d{1,7}$/.test(raw) || Number(raw) < 1) throw apiError(400, "invalid_request", "The release number must be a positive whole number.", "number");
    return releaseDownloadResponse(request, caller, params.slug, Number(raw), format);
  });
}

export const action = readOnlyEndpoint;

import type { Route } from "./+types/releases.json";
import { releaseDownloadResponse, requireDownloadCaller } from "~/.server/api/download";
import { apiError, runApi } from "~/.server/api/respond";

// /sets/:slug/releases/:number.json — the frozen JSON bytes, for a signed-in reader or a bearer token.
export async function loader({ request, params }: Route.LoaderArgs) {
  const caller = await requireDownloadCaller(request);
  return runApi(async () => {
    if (!/^\d{1,7}$/.test(params.number) || Number(params.number) < 1) throw apiError(404, "not_found", "There is no such release.", "number");
    return releaseDownloadResponse(request, caller, params.slug, Number(params.number), "json");
  });
}

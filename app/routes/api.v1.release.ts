import { z } from "zod";
import type { Route } from "./+types/api.v1.release";
import { requireApiCaller } from "~/.server/api/guard";
import { apiError, apiJson, readOnlyEndpoint, runApi } from "~/.server/api/respond";
import { releaseDetail } from "~/.server/api/sets";

const releaseNumberParam = z.coerce.number().int().positive().max(1_000_000);

function parseReleaseNumber(raw: string | undefined): number {
  const n = releaseNumberParam.safeParse(raw);
  if (!n.success || !/^\d+$/.test(raw ?? "")) throw apiError(400, "invalid_request", "The release number must be a positive whole number.", "number");
  return n.data;
}

export async function loader({ request, params }: Route.LoaderArgs) {
  return runApi(async () => {
    await requireApiCaller(request);
    return apiJson(await releaseDetail(params.slug, parseReleaseNumber(params.number)));
  });
}

export const action = readOnlyEndpoint;

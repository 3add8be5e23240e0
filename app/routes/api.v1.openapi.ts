import { openApiDocument } from "~/.server/api/openapi";
import { readOnlyEndpoint } from "~/.server/api/respond";

// Public like any API description: it names the endpoints, not the data.
export async function loader() {
  return Response.json(openApiDocument(), { headers: { "Cache-Control": "no-cache" } });
}

export const action = readOnlyEndpoint;

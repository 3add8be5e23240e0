import { openApiDocument } from "~/.server/api/openapi";

// Public like any API description: it names the endpoints, not the data.
export async function loader() {
  return Response.json(openApiDocument(), { headers: { "Cache-Control": "no-cache" } });
}

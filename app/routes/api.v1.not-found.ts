import { apiError } from "~/.server/api/respond";

// Unknown addresses under /api/v1 answer in the API's own error format, not with the HTML 404 page.
export async function loader() {
  return apiError(404, "not_found", "There is no API endpoint at this address; see /api/v1/openapi.json.", null);
}

export async function action() {
  return apiError(404, "not_found", "There is no API endpoint at this address; see /api/v1/openapi.json.", null);
}

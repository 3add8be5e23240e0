import type { Route } from "./+types/api.v1.whoami";
import { readOnlyEndpoint } from "~/.server/api/respond";
import { requireApiUser } from "~/.server/tokens";

// Tells a script or the browser whom its credentials stand for.
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireApiUser(request);
  return Response.json(
    { user: { id: user.id, email: user.email, name: user.name, role: user.role, leadFamilyIds: user.leadFamilyIds } },
    { headers: { "Cache-Control": "no-store" } },
  );
}

export const action = readOnlyEndpoint;

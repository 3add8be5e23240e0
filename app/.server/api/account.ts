import { requireApiUser } from "../tokens";

/** Whom the credentials (a token or the browser's session) stand for. */
export async function accountAnswer(request: Request): Promise<Response> {
  const user = await requireApiUser(request);
  return Response.json(
    { user: { id: user.id, email: user.email, name: user.name, role: user.role, leadFamilyIds: user.leadFamilyIds } },
    { headers: { "Cache-Control": "no-store" } },
  );
}

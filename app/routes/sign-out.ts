import { redirect } from "react-router";
import type { Route } from "./+types/sign-out";
import { signOut } from "~/.server/auth/sign-in";
import { requireSameOrigin } from "~/.server/permissions";

export function loader(_: Route.LoaderArgs) {
  throw redirect("/");
}

// A resource route, so React Router does not check Origin for it: we do.
export async function action({ request }: Route.ActionArgs) {
  requireSameOrigin(request);
  return signOut(request);
}

import { redirect } from "react-router";
import type { Route } from "./+types/auth.magic-link";
import { completeMagicLink } from "~/.server/auth/sign-in";
import { getOptionalUser } from "~/.server/permissions";

// Open to everyone: the link itself, checked against this browser's pending code, is the credential.
export async function loader({ request }: Route.LoaderArgs) {
  if (await getOptionalUser(request)) throw redirect("/");
  return completeMagicLink(request);
}

import type { Route } from "./+types/api.v1.account";
import { accountAnswer } from "~/.server/api/account";
import { readOnlyEndpoint } from "~/.server/api/respond";

// Tells a script or the browser whom its credentials stand for.
export async function loader({ request }: Route.LoaderArgs) {
  return accountAnswer(request);
}

export const action = readOnlyEndpoint;

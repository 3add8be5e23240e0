import type { Route } from "./+types/api.v1.whoami";
import { accountAnswer } from "~/.server/api/account";
import { deprecatedAlias } from "~/.server/api/deprecation";
import { readOnlyEndpoint } from "~/.server/api/respond";

// The old address of /api/v1/account, answered the same for one release with Deprecation and Link headers.
export const loader = deprecatedAlias("/api/v1/account", ({ request }: Route.LoaderArgs) => accountAnswer(request));

export const action = deprecatedAlias("/api/v1/account", readOnlyEndpoint);

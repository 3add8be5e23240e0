import { env } from "../env";
import { hasRole, requireSameOrigin, type CurrentUser } from "../permissions";
import { countHitInProcess } from "../rate-limit";
import { hashToken, requireApiUser } from "../tokens";
import { apiError } from "./respond";

const WINDOW_SECONDS = 60;

export type ApiCaller = { user: CurrentUser; viaToken: boolean };

function bucketOf(request: Request, user: CurrentUser): { bucket: string; viaToken: boolean } {
  const header = request.headers.get("authorization");
  const token = header ? /^Bearer\s+(\S+)$/i.exec(header.trim())?.[1] : undefined;
  // Per token, so one busy pipeline does not use up its owner's other tokens; the browser counts per user.
  if (token) return { bucket: `api:token:${hashToken(token).slice(0, 32)}`, viaToken: true };
  return { bucket: `api:user:${user.id}`, viaToken: false };
}

/** Who calls (bearer token or browser session), counted against the per-minute limit: 401 without credentials, 429 past the limit. */
export async function requireApiCaller(request: Request): Promise<ApiCaller> {
  const user = await requireApiUser(request);
  const { bucket, viaToken } = bucketOf(request, user);
  const limit = env().BANDLEDGER_API_RATE_PER_MINUTE;
  const { count: n, secondsLeft: retryAfter } = await countHitInProcess(bucket, WINDOW_SECONDS);
  if (n > limit) {
    throw apiError(429, "rate_limited", `More than ${limit} requests a minute; try again in ${retryAfter} s.`, null, { "Retry-After": String(retryAfter), "Cache-Control": "no-store" });
  }
  return { user, viaToken };
}

/** For API calls that change something: personal tokens only read, and a browser call must come from our own pages. */
export function requireSessionWrite(request: Request, caller: ApiCaller): void {
  if (caller.viaToken) throw apiError(403, "read_only_token", "Personal API tokens only read; make this change signed in on the site.", null);
  requireSameOrigin(request);
}

export function requireApiRole(caller: ApiCaller, role: "contributor" | "lead"): void {
  if (!hasRole(caller.user, role)) throw apiError(403, "forbidden", role === "lead" ? "Only a lead or an admin may do this." : "This needs the contributor role or above.", null);
}

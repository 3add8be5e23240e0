/**
 * Old /api/v1 addresses, kept answering for one release after they were renamed. Each answer, success or error,
 * carries `Deprecation` (RFC 9745: a structured-field date, the moment the address was deprecated) and
 * `Link: <successor>; rel="successor-version"`. The OpenAPI description marks these operations deprecated from the
 * same list, so the two cannot drift apart.
 */
export const DEPRECATED_SINCE = new Date("2026-12-02T00:00:00Z");

export type DeprecatedPath = { path: string; successor: string };

export const DEPRECATED_PATHS: readonly DeprecatedPath[] = [{ path: "/api/v1/whoami", successor: "/api/v1/account" }];

export function deprecationHeaders(successor: string): Record<string, string> {
  return { Deprecation: `@${Math.floor(DEPRECATED_SINCE.getTime() / 1000)}`, Link: `<${successor}>; rel="successor-version"` };
}

function marked(response: Response, successor: string): Response {
  const headers = new Headers(response.headers);
  for (const [name, value] of Object.entries(deprecationHeaders(successor))) headers.set(name, value);
  return new Response(response.body, { status: response.status, statusText: response.statusText, headers });
}

/** Wraps a loader or action of an old address: what the new address answers, marked deprecated (thrown Responses too). */
export function deprecatedAlias<A>(successor: string, handler: (args: A) => Response | Promise<Response>): (args: A) => Promise<Response> {
  if (!DEPRECATED_PATHS.some((d) => d.successor === successor)) throw new Error(`${successor} is not the successor of a listed deprecated path`);
  return async (args: A) => {
    try {
      return marked(await handler(args), successor);
    } catch (e) {
      if (e instanceof Response) throw marked(e, successor);
      throw e;
    }
  };
}

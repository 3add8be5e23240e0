import { z } from "zod";
import { isSolveRefused } from "../checks/solve-guard";
import { isDatabaseDown } from "../db/client";
import { isSetError } from "../sets/errors";
import { readLimitedBody, StorageError } from "../storage";
import { apiError } from "../tokens";

// Far above any request of ours (a check's inputs, a set's members), read as it arrives and refused past it.
export const MAX_JSON_BODY_BYTES = 256 * 1024;

export { apiError };

/** A JSON answer of the API; never cached, since it follows the live registry. */
export function apiJson(body: unknown, init: { status?: number; headers?: HeadersInit } = {}): Response {
  const headers = new Headers(init.headers);
  if (!headers.has("Cache-Control")) headers.set("Cache-Control", "no-store");
  return Response.json(body, { status: init.status ?? 200, headers });
}

/** Parses query parameters with a schema; a bad one is a 400 naming the parameter. */
export function parseQuery<S extends z.ZodType>(schema: S, request: Request): z.infer<S> {
  const params = Object.fromEntries(new URL(request.url).searchParams);
  const parsed = schema.safeParse(params);
  if (!parsed.success) throw badRequest(parsed.error);
  return parsed.data;
}

/** Parses a JSON body: not JSON is a 400 "invalid_json", a wrong shape a 400 naming the field. */
export async function parseJsonBody<S extends z.ZodType>(schema: S, request: Request): Promise<z.infer<S>> {
  const type = request.headers.get("content-type") ?? "";
  if (!/^application\/json\b/i.test(type)) throw apiError(400, "invalid_content_type", "Send the body as JSON with Content-Type: application/json.", null);
  let bytes: Buffer<ArrayBuffer>;
  try {
    bytes = await readLimitedBody(request, MAX_JSON_BODY_BYTES);
  } catch (e) {
    // The rest of the body is never read, so the connection cannot carry another request: close it.
    if (e instanceof StorageError) throw apiError(413, "too_large", `The body is too large: at most ${MAX_JSON_BODY_BYTES / 1024} kB of JSON is taken.`, null, { Connection: "close" });
    throw e;
  }
  let text: string;
  try {
    // JSON is UTF-8 (RFC 8259 §8.1); request.json() would turn broken bytes into U+FFFD without a word.
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    throw apiError(400, "invalid_json", "The body is not UTF-8, so it is not valid JSON.", null);
  }
  let body: unknown;
  try {
    body = JSON.parse(text);
  } catch {
    throw apiError(400, "invalid_json", "The body is not valid JSON.", null);
  }
  const parsed = schema.safeParse(body);
  if (!parsed.success) throw badRequest(parsed.error);
  return parsed.data;
}

function badRequest(error: z.ZodError): Response {
  const issue = error.issues[0];
  const field = issue.path.length ? issue.path.join(".") : null;
  return apiError(400, "invalid_request", field ? `${field}: ${issue.message}` : issue.message, field);
}

/**
 * The action of a read-only endpoint: without one, React Router answers another method with a bare 405
 * "Unexpected Server Error"; this says which method the endpoint takes, in the API's own error format.
 */
export function readOnlyEndpoint({ request }: { request: Request }): Response {
  return apiError(405, "method_not_allowed", `${request.method.toUpperCase().slice(0, 16)} is not allowed here: this endpoint only reads (GET); see /api/v1/openapi.json.`, null, { Allow: "GET, HEAD" });
}

/** Runs an API handler: thrown Responses pass through, service refusals become their JSON error, the rest a 500. */
export async function runApi(handler: () => Promise<Response>): Promise<Response> {
  try {
    return await handler();
  } catch (e) {
    if (e instanceof Response) return e;
    if (isSetError(e)) return apiError(e.status, e.code, e.message, e.field);
    if (isSolveRefused(e)) {
      const { status, message, retryAfterSeconds } = e.refusal;
      return apiError(status, status === 429 ? "rate_limited" : "busy", message, null, { "Retry-After": String(retryAfterSeconds), "Cache-Control": "no-store" });
    }
    console.error(e);
    if (isDatabaseDown(e)) return apiError(503, "database_unavailable", "The database is unavailable right now; try again in a few seconds.", null, { "Retry-After": "5" });
    return apiError(500, "internal_error", "The server hit an unexpected error; it has been logged.", null);
  }
}

import { releaseFileName, type ReleaseFormat } from "~/domain/release-format";
import { auditInBatch } from "../audit";
import { requireUser } from "../permissions";
import { servedRelease } from "../sets/release-cache";
import { requireApiCaller, type ApiCaller } from "./guard";

// Members only: a shared cache must never hand a release to someone who did not sign in or show a token, while
// the member's own browser or pipeline may keep it for good (it never changes). The answer varies by credentials.
export const IMMUTABLE = "private, max-age=31536000, immutable";
export const VARY = "Cookie, Authorization";

/** A download's caller: a bearer token (counted against the API limit) or the browser session (else to sign-in). */
export async function requireDownloadCaller(request: Request): Promise<ApiCaller> {
  if (request.headers.has("authorization")) return requireApiCaller(request);
  return { user: await requireUser(request), viaToken: false };
}

// If-None-Match uses the weak comparison (RFC 9110 §13.1.2): W/ prefixes are ignored, "*" matches any.
export function matchesIfNoneMatch(header: string | null, etag: string): boolean {
  if (!header) return false;
  return header.split(",").map((t) => t.trim().replace(/^W\//, "")).some((t) => t === "*" || t === etag);
}

/**
 * The stored bytes of a release, exactly as frozen: ETag is the hash of what is served (the content hash for JSON,
 * the CSV's own hash for CSV), kept for a year as immutable by the member's own client only, 304 for a matching If-None-Match.
 */
export async function releaseDownloadResponse(request: Request, caller: ApiCaller, slug: string, number: number, format: ReleaseFormat): Promise<Response> {
  const release = await servedRelease(slug, number);
  const file = release.files[format];
  const headers = new Headers({
    ETag: file.etag,
    "Cache-Control": IMMUTABLE,
    Vary: VARY,
    "X-Bandledger-Release-Sha256": release.sha256,
    "X-Content-Type-Options": "nosniff",
  });
  const notModified = matchesIfNoneMatch(request.headers.get("if-none-match"), file.etag);
  if (caller.viaToken) {
    // Written before the answer goes out, in one INSERT with the other downloads of the same moment.
    await auditInBatch({ id: caller.user.id, email: caller.user.email }, "release.downloaded", { type: "release", id: release.id }, request, {
      slug, number, format, sha256: release.sha256, via: "token", notModified,
    });
  }
  if (notModified) return new Response(null, { status: 304, headers });
  headers.set("Content-Type", format === "json" ? "application/json; charset=utf-8" : "text/csv; charset=utf-8; header=present");
  headers.set("Content-Disposition", `attachment; filename="${releaseFileName(release.slug, number, format)}"`);
  headers.set("Repr-Digest", file.reprDigest);
  return new Response(file.bytes, { status: 200, headers });
}

import { createHash } from "node:crypto";
import { releaseFileName, type ReleaseFormat } from "~/domain/release-format";
import { audit } from "../audit";
import { requireUser } from "../permissions";
import { requireRelease, requireSet } from "../sets/queries";
import { requireApiCaller, type ApiCaller } from "./guard";

export const IMMUTABLE = "public, max-age=31536000, immutable";

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
 * the CSV's own hash for CSV), cached for a year as immutable, 304 for a matching If-None-Match.
 */
export async function releaseDownloadResponse(request: Request, caller: ApiCaller, slug: string, number: number, format: ReleaseFormat): Promise<Response> {
  const set = await requireSet(slug);
  const release = await requireRelease(set, number);
  const body = format === "json" ? release.canonicalJson : release.csv;
  const etag = `"${format === "json" ? release.sha256 : release.csvSha256}"`;
  const headers = new Headers({
    ETag: etag,
    "Cache-Control": IMMUTABLE,
    "X-Bandledger-Release-Sha256": release.sha256,
    "X-Content-Type-Options": "nosniff",
  });
  const notModified = matchesIfNoneMatch(request.headers.get("if-none-match"), etag);
  if (caller.viaToken) {
    await audit({ id: caller.user.id, email: caller.user.email }, "release.downloaded", { type: "release", id: release.id }, request, {
      slug, number, format, sha256: release.sha256, via: "token", notModified,
    });
  }
  if (notModified) return new Response(null, { status: 304, headers });
  const bytes = Buffer.from(body, "utf8");
  headers.set("Content-Type", format === "json" ? "application/json; charset=utf-8" : "text/csv; charset=utf-8; header=present");
  headers.set("Content-Disposition", `attachment; filename="${releaseFileName(set.slug, number, format)}"`);
  headers.set("Repr-Digest", `sha-256=:${createHash("sha256").update(bytes).digest("base64")}:`);
  return new Response(bytes, { status: 200, headers });
}

import Negotiator from "negotiator";
import { releaseFileName, type ReleaseFormat } from "~/domain/release-format";
import { auditInBatch } from "../audit";
import { requireUser } from "../permissions";
import { RELEASE_ENCODINGS, servedRelease, type ReleaseEncoding, type ServedFile } from "../sets/release-cache";
import { requireApiCaller, type ApiCaller } from "./guard";

// Members only: a shared cache must never hand a release to someone who did not sign in or show a token, while
// the member's own browser or pipeline may keep it for good (it never changes). The answer varies by credentials.
export const IMMUTABLE = "private, max-age=31536000, immutable";
export const VARY = "Cookie, Authorization";
/** With an encoded form held the answer also varies by the codings the request accepts. */
export const VARY_ENCODED = `${VARY}, Accept-Encoding`;

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

type NegotiatorWithPreference = { encoding(available: string[], preferred?: string[]): string | undefined };

/**
 * The content coding to send (RFC 9110 §12.5.3): the best the request accepts among those the release is held in,
 * brotli before gzip when both are equally welcome; identity without Accept-Encoding or when nothing else fits.
 */
export function chooseEncoding(acceptEncoding: string | null, file: ServedFile): ReleaseEncoding {
  const held = RELEASE_ENCODINGS.filter((e) => file[e]);
  if (!acceptEncoding || !held.length) return "identity";
  const negotiator = new Negotiator({ headers: { "accept-encoding": acceptEncoding } }) as unknown as NegotiatorWithPreference;
  const chosen = negotiator.encoding([...held, "identity"], [...held]);
  return (chosen as ReleaseEncoding | undefined) ?? "identity";
}

/**
 * The stored bytes of a release, exactly as frozen, as identity or as the gzip or brotli form made once when the
 * release was first read (Vary then names Accept-Encoding too). The identity ETag is the hash of the file (the content hash for
 * JSON, the CSV's own hash for CSV); each encoded form has an ETag of its own that begins with it, and a
 * Repr-Digest of the encoded bytes. Kept for a year as immutable by the member's own client only, 304 for a matching
 * If-None-Match.
 */
export async function releaseDownloadResponse(request: Request, caller: ApiCaller, slug: string, number: number, format: ReleaseFormat): Promise<Response> {
  const release = await servedRelease(slug, number);
  const file = release.files[format];
  const encoding = chooseEncoding(request.headers.get("accept-encoding"), file);
  const representation = file[encoding] ?? file.identity;
  const headers = new Headers({
    ETag: representation.etag,
    "Cache-Control": IMMUTABLE,
    Vary: VARY,
    "X-Bandledger-Release-Sha256": release.sha256,
    "X-Content-Type-Options": "nosniff",
  });
  if (RELEASE_ENCODINGS.some((e) => file[e])) headers.set("Vary", VARY_ENCODED);
  const notModified = matchesIfNoneMatch(request.headers.get("if-none-match"), representation.etag);
  if (caller.viaToken) {
    // Written before the answer goes out, in one INSERT with the other downloads of the same moment.
    await auditInBatch({ id: caller.user.id, email: caller.user.email }, "release.downloaded", { type: "release", id: release.id }, request, {
      slug, number, format, sha256: release.sha256, via: "token", notModified,
    });
  }
  if (notModified) return new Response(null, { status: 304, headers });
  headers.set("Content-Type", format === "json" ? "application/json; charset=utf-8" : "text/csv; charset=utf-8; header=present");
  headers.set("Content-Disposition", `attachment; filename="${releaseFileName(release.slug, number, format)}"`);
  if (encoding !== "identity") headers.set("Content-Encoding", encoding);
  headers.set("Content-Length", String(representation.bytes.length));
  headers.set("Repr-Digest", representation.reprDigest);
  return new Response(representation.bytes, { status: 200, headers });
}

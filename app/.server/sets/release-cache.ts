import { createHash } from "node:crypto";
import { promisify } from "node:util";
import { brotliCompress, constants, gzip } from "node:zlib";
import type { ReleaseFormat } from "~/domain/release-format";
import { requireRelease, requireSet } from "./queries";

/** The content codings a release is held in besides its identity bytes, in the server's order of preference. */
export const RELEASE_ENCODINGS = ["br", "gzip"] as const;
export type ReleaseEncoding = (typeof RELEASE_ENCODINGS)[number] | "identity";

/** One representation of a release file: its bytes as sent, its strong ETag and its Repr-Digest (RFC 9530). */
export type Representation = { bytes: Uint8Array<ArrayBuffer>; etag: string; reprDigest: string };
export type ServedFile = { identity: Representation } & Partial<Record<Exclude<ReleaseEncoding, "identity">, Representation>>;

/** What a download needs of one frozen release, in the bytes it is served as. */
export type ServedRelease = {
  id: number;
  slug: string;
  sha256: string;
  files: Record<ReleaseFormat, ServedFile>;
};

// Frozen releases never change (database triggers refuse UPDATE and DELETE, and a set's slug is fixed), so their
// bytes, and a gzip and a brotli form of them, can be made once and held in memory: a download then costs no
// database read, no hashing and no compression. Each app process holds its own copy. Bounded by size, least
// recently used first out.
const MAX_BYTES = 64 * 1024 * 1024;
const cache = new Map<string, ServedRelease>();
const loading = new Map<string, Promise<ServedRelease>>();
let heldBytes = 0;

// Both near the top of their scale without the slowest settings: on a 1 MB release about 50 ms (gzip 9) and 70 ms
// (brotli 9) of a thread-pool thread, once; brotli 11 took 8 s on the same bytes.
const GZIP_LEVEL = 9;
const BROTLI_QUALITY = 9;
const gzipAsync = promisify(gzip);
const brotliAsync = promisify(brotliCompress);

const sha256 = (bytes: Uint8Array) => createHash("sha256").update(bytes);
const digestOf = (bytes: Uint8Array) => `sha-256=:${sha256(bytes).digest("base64")}:`;
const sizeOfFile = (f: ServedFile) => f.identity.bytes.length + (f.gzip?.bytes.length ?? 0) + (f.br?.bytes.length ?? 0);
const sizeOf = (r: ServedRelease) => sizeOfFile(r.files.json) + sizeOfFile(r.files.csv);

function encode(bytes: Uint8Array, encoding: Exclude<ReleaseEncoding, "identity">): Promise<Buffer> {
  return encoding === "gzip"
    ? gzipAsync(bytes, { level: GZIP_LEVEL })
    : brotliAsync(bytes, { params: { [constants.BROTLI_PARAM_QUALITY]: BROTLI_QUALITY, [constants.BROTLI_PARAM_SIZE_HINT]: bytes.length } });
}

/**
 * The identity bytes with the file's own hash as ETag, and each encoded form with an ETag of its own: the file's
 * hash, the coding and the first 16 hex digits of the encoded bytes' SHA-256, so that each ETag names exactly one
 * byte sequence (RFC 9110 §8.8.3 strong validators) even if another zlib encodes differently. Repr-Digest is of
 * the bytes as sent, as RFC 9530 defines it for a content-coded representation. An encoding that saves nothing
 * is not kept.
 */
async function representations(text: string, fileHash: string, compress: boolean): Promise<ServedFile> {
  const bytes = new TextEncoder().encode(text);
  const file: ServedFile = { identity: { bytes, etag: `"${fileHash}"`, reprDigest: digestOf(bytes) } };
  if (!compress) return file;
  await Promise.all(
    RELEASE_ENCODINGS.map(async (encoding) => {
      const encoded = await encode(bytes, encoding);
      if (encoded.length >= bytes.length) return;
      const copy = new Uint8Array(encoded.length);
      copy.set(encoded);
      const hash = sha256(copy);
      file[encoding] = { bytes: copy, etag: `"${fileHash}-${encoding}-${hash.copy().digest("hex").slice(0, 16)}"`, reprDigest: `sha-256=:${hash.digest("base64")}:` };
    }),
  );
  return file;
}

async function load(slug: string, number: number): Promise<ServedRelease> {
  const set = await requireSet(slug);
  const release = await requireRelease(set, number);
  // A release too big to be held is served as it is: compressing it again for every download would cost more.
  const compress = release.canonicalJson.length + release.csv.length <= MAX_BYTES / 2;
  const [json, csv] = await Promise.all([
    representations(release.canonicalJson, release.sha256, compress),
    representations(release.csv, release.csvSha256, compress),
  ]);
  return { id: release.id, slug: set.slug, sha256: release.sha256, files: { json, csv } };
}

export async function servedRelease(slug: string, number: number): Promise<ServedRelease> {
  const key = `${slug}\u0000${number}`;
  const hit = cache.get(key);
  if (hit) {
    cache.delete(key);
    cache.set(key, hit);
    return hit;
  }
  // Concurrent first downloads share one read and one compression; a refusal (404, 403) is not kept.
  let pending = loading.get(key);
  if (!pending) {
    pending = load(slug, number).then((served) => {
      const size = sizeOf(served);
      if (size <= MAX_BYTES) {
        cache.set(key, served);
        heldBytes += size;
        for (const [k, r] of cache) {
          if (heldBytes <= MAX_BYTES) break;
          cache.delete(k);
          heldBytes -= sizeOf(r);
        }
      }
      return served;
    }).finally(() => loading.delete(key));
    loading.set(key, pending);
  }
  return pending;
}

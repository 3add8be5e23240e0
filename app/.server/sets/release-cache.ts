import { createHash } from "node:crypto";
import type { ReleaseFormat } from "~/domain/release-format";
import { requireRelease, requireSet } from "./queries";

/** What a download needs of one frozen release, in the bytes it is served as. */
export type ServedRelease = {
  id: number;
  slug: string;
  sha256: string;
  files: Record<ReleaseFormat, { bytes: Uint8Array<ArrayBuffer>; etag: string; reprDigest: string }>;
};

// Frozen releases never change (database triggers refuse UPDATE and DELETE, and a set's slug is fixed), so their
// bytes can be held in memory once read: a download then costs no database read and no hashing. Bounded by size,
// least recently used first out.
const MAX_BYTES = 64 * 1024 * 1024;
const cache = new Map<string, ServedRelease>();
let heldBytes = 0;

const sizeOf = (r: ServedRelease) => r.files.json.bytes.length + r.files.csv.bytes.length;

function file(text: string, etagHash: string) {
  const bytes = new TextEncoder().encode(text);
  return { bytes, etag: `"${etagHash}"`, reprDigest: `sha-256=:${createHash("sha256").update(bytes).digest("base64")}:` };
}

export async function servedRelease(slug: string, number: number): Promise<ServedRelease> {
  const key = `${slug}\u0000${number}`;
  const hit = cache.get(key);
  if (hit) {
    cache.delete(key);
    cache.set(key, hit);
    return hit;
  }
  const set = await requireSet(slug);
  const release = await requireRelease(set, number);
  const served: ServedRelease = {
    id: release.id,
    slug: set.slug,
    sha256: release.sha256,
    files: { json: file(release.canonicalJson, release.sha256), csv: file(release.csv, release.csvSha256) },
  };
  // Concurrent first downloads each read it; the first to finish is kept, so its size is counted once.
  const raced = cache.get(key);
  if (raced) return raced;
  const size = sizeOf(served);
  if (size > MAX_BYTES) return served;
  cache.set(key, served);
  heldBytes += size;
  for (const [k, r] of cache) {
    if (heldBytes <= MAX_BYTES) break;
    cache.delete(k);
    heldBytes -= sizeOf(r);
  }
  return served;
}

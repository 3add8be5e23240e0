import { randomBytes, createHash } from "node:crypto";
import { rename, rm, writeFile } from "node:fs/promises";
import http from "node:http";
import https from "node:https";
import path from "node:path";
import { promisify } from "node:util";
import { brotliDecompress, gunzip } from "node:zlib";
import { verifyReleaseText, type ReleaseContent, type ReleaseFormat } from "../domain/release-format";
import { type Io, UsageError } from "./command";
import type { Values } from "./args";
import type { ReleaseRef } from "./release-ref";

// What every command that fetches a frozen release shares: the server and token options, the download with each of
// its checks (API hash, ETag, Repr-Digest, the canonical form's own hash), and writing a file whole.

/** The download did not match the release's hash: nothing was written. */
export const EXIT_MISMATCH = 3;
/** The server or the network refused (unknown set, bad token, no answer). */
export const EXIT_FAILED = 1;

export class ReleaseFailure extends Error {
  constructor(readonly exitCode: number, message: string) {
    super(message);
  }
}

export const serverOptions = {
  url: { type: "string" },
  token: { type: "string" },
} as const;

export const SERVER_USAGE = `  --url            the Bandledger server; default $BANDLEDGER_URL or http://127.0.0.1:3000
  --token          a personal API token; default $BANDLEDGER_TOKEN`;

export type Server = { baseUrl: string; token: string };

/** --out (required) and --format (json, the default, or csv) of a command that writes a release's file. */
export function outAndFormat(values: Values): { out: string; format: ReleaseFormat } {
  const out = values.out as string | undefined;
  if (!out) throw new UsageError("--out is required");
  const format = (values.format as string | undefined) ?? "json";
  if (format !== "json" && format !== "csv") throw new UsageError(`--format must be json or csv (got "${format}")`);
  return { out, format };
}

/** Runs a command's work with the server; a ReleaseFailure is one line on stderr and its exit code. */
export async function exitOnReleaseFailure(command: string, io: Io, work: () => Promise<number>): Promise<number> {
  try {
    return await work();
  } catch (e) {
    if (e instanceof ReleaseFailure) {
      io.stderr(`bandledger ${command}: ${e.message}\n`);
      return e.exitCode;
    }
    throw e;
  }
}

/** The server and token from --url/--token or the environment; a missing or malformed one is a usage error. */
export function serverFrom(values: Values): Server {
  const token = (values.token as string | undefined) ?? process.env.BANDLEDGER_TOKEN;
  if (!token) throw new UsageError("a token is needed: --token or BANDLEDGER_TOKEN (create one on your account page)");
  const baseUrl = (values.url as string | undefined) ?? process.env.BANDLEDGER_URL ?? "http://127.0.0.1:3000";
  if (!/^https?:\/\//.test(baseUrl)) throw new UsageError(`--url must start with http:// or https:// (got "${baseUrl}")`);
  return { baseUrl, token };
}

export type ReleaseMeta = { number: number; sha256: string; csvSha256: string; itemCount: number; set: { slug: string; name: string } };

async function apiMessage(response: Response): Promise<string> {
  try {
    const body = (await response.json()) as { error?: { message?: string } };
    return body.error?.message ?? response.statusText;
  } catch {
    return response.statusText || `status ${response.status}`;
  }
}

async function get(url: string, token: string): Promise<Response> {
  try {
    return await fetch(url, { headers: { Authorization: `Bearer ${token}`, "Accept-Encoding": "identity" }, redirect: "error" });
  } catch (e) {
    const cause = (e as { cause?: { code?: string; message?: string } }).cause;
    throw new ReleaseFailure(EXIT_FAILED, `cannot reach ${new URL(url).origin} (${cause?.code ?? cause?.message ?? (e as Error).message})`);
  }
}

export type Compression = "auto" | "br" | "gzip" | "none";
export const COMPRESSIONS: readonly Compression[] = ["auto", "br", "gzip", "none"];
const ACCEPT: Record<Compression, string> = { auto: "br, gzip;q=0.9, identity;q=0.1", br: "br, identity;q=0.1", gzip: "gzip, identity;q=0.1", none: "identity" };
// A release is a few megabytes; a stream that claims more is refused rather than inflated without end.
const MAX_DECODED_BYTES = 1024 * 1024 * 1024;
const decoders = { gzip: promisify(gunzip), br: promisify(brotliDecompress) };

type RawDownload = { status: number; headers: http.IncomingHttpHeaders; body: Buffer };

// The download over node:http rather than fetch, which would decode a compressed answer before the Repr-Digest of
// the bytes actually sent could be checked.
function getRaw(url: string, token: string, accept: string): Promise<RawDownload> {
  const target = new URL(url);
  const client = target.protocol === "https:" ? https : http;
  return new Promise((resolve, reject) => {
    const req = client.get(target, { headers: { Authorization: `Bearer ${token}`, "Accept-Encoding": accept } }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
      res.on("error", reject);
    });
    req.on("error", (e) => {
      const code = (e as NodeJS.ErrnoException).code;
      reject(new ReleaseFailure(EXIT_FAILED, `cannot reach ${target.origin} (${code ?? e.message})`));
    });
  });
}

function rawMessage(raw: RawDownload): string {
  try {
    return (JSON.parse(raw.body.toString("utf8")) as { error?: { message?: string } }).error?.message ?? `status ${raw.status}`;
  } catch {
    return `status ${raw.status}`;
  }
}

export type VerifiedRelease = { bytes: Uint8Array; content: ReleaseContent; sha256: string; meta: ReleaseMeta; encoding: string };

/**
 * Downloads a frozen release and checks it before anyone uses it: the release's hash from the API, the download's
 * ETag and Repr-Digest (of the bytes as sent, compressed or not), the SHA-256 of the decoded bytes and the hash
 * recomputed from the file's canonical form. Any difference is a ReleaseFailure with EXIT_MISMATCH; a refusal or no
 * answer one with EXIT_FAILED.
 */
export async function fetchVerifiedRelease(ref: ReleaseRef, format: ReleaseFormat, server: Server, compression: Compression = "auto"): Promise<VerifiedRelease> {
  const base = server.baseUrl.replace(/\/+$/, "");
  const releasePath = `${base}/api/v1/sets/${encodeURIComponent(ref.slug)}/releases/${ref.number}`;
  const metaResponse = await get(releasePath, server.token);
  if (!metaResponse.ok) throw new ReleaseFailure(EXIT_FAILED, `the server refused (${metaResponse.status}): ${await apiMessage(metaResponse)}`);
  const meta = (await metaResponse.json()) as ReleaseMeta;
  const download = await getRaw(`${releasePath}/download?format=${format}`, server.token, ACCEPT[compression]);
  if (download.status !== 200) throw new ReleaseFailure(EXIT_FAILED, `the download was refused (${download.status}): ${rawMessage(download)}`);
  const expectedFileHash = format === "json" ? meta.sha256 : meta.csvSha256;
  const mismatch = (why: string) => new ReleaseFailure(EXIT_MISMATCH, `hash mismatch, nothing written: ${why}`);
  const encoding = String(download.headers["content-encoding"] ?? "identity").trim().toLowerCase();
  if (encoding !== "identity" && encoding !== "gzip" && encoding !== "br") throw new ReleaseFailure(EXIT_FAILED, `the server sent the download in an encoding this client does not read (${encoding})`);
  // The identity ETag is the file's hash; an encoded form's ETag begins with it and names its coding.
  const etag = download.headers.etag;
  const etagFits = encoding === "identity" ? etag === `"${expectedFileHash}"` : !!etag?.startsWith(`"${expectedFileHash}-${encoding}-`);
  if (!etagFits) throw mismatch(`the ETag ${etag ?? "(none)"} is not the release's "${expectedFileHash}"`);
  // Repr-Digest covers the representation as sent (RFC 9530): the encoded bytes when Content-Encoding is set.
  const digest = download.headers["repr-digest"];
  if (digest && digest !== `sha-256=:${createHash("sha256").update(download.body).digest("base64")}:`) throw mismatch("the bytes received are not the bytes the server sent (Repr-Digest)");
  let bytes: Buffer;
  try {
    bytes = encoding === "identity" ? download.body : await decoders[encoding](download.body, { maxOutputLength: MAX_DECODED_BYTES });
  } catch {
    throw mismatch(`the ${encoding} stream cannot be decoded`);
  }
  // The decoded bytes are the file itself: a CSV file's own SHA-256 is the release's csvSha256; a JSON file's
  // content hash (the release's sha256) is recomputed from its canonical form below.
  if (format === "csv") {
    const bytesSha256 = createHash("sha256").update(bytes).digest("hex");
    if (bytesSha256 !== meta.csvSha256) throw mismatch(`the CSV bytes hash to ${bytesSha256}, not the release's csvSha256 ${meta.csvSha256}`);
  }
  let text: string;
  try {
    text = new TextDecoder("utf-8", { fatal: true }).decode(bytes);
  } catch {
    throw mismatch("the download is not valid UTF-8");
  }
  const verified = await verifyReleaseText(text);
  if (!verified.ok) throw mismatch(verified.reason);
  if (verified.format !== format) throw mismatch(`asked for ${format}, received ${verified.format}`);
  if (verified.sha256 !== meta.sha256) throw mismatch(`the file's content hash ${verified.sha256} is not the release's ${meta.sha256}`);
  if (verified.content.set.slug !== ref.slug || verified.content.release.number !== ref.number) {
    throw mismatch(`the file holds ${verified.content.set.slug} release ${verified.content.release.number}`);
  }
  return { bytes, content: verified.content, sha256: verified.sha256, meta, encoding };
}

/** Writes a file whole, through a temporary file beside it and a rename, so a reader never sees half of it. */
export async function writeWhole(out: string, bytes: Uint8Array | string): Promise<void> {
  const target = path.resolve(out);
  const temporary = path.join(path.dirname(target), `.${path.basename(target)}.${randomBytes(6).toString("hex")}.part`);
  try {
    await writeFile(temporary, bytes, { flag: "wx" });
    await rename(temporary, target);
  } catch (e) {
    await rm(temporary, { force: true });
    throw new ReleaseFailure(EXIT_FAILED, `cannot write ${out}: ${(e as Error).message}`);
  }
}

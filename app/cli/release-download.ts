import { randomBytes, createHash } from "node:crypto";
import { rename, rm, writeFile } from "node:fs/promises";
import path from "node:path";
import { verifyReleaseText, type ReleaseContent, type ReleaseFormat } from "../domain/release-format";
import { UsageError } from "./command";
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

export type VerifiedRelease = { bytes: Uint8Array; content: ReleaseContent; sha256: string; meta: ReleaseMeta };

/**
 * Downloads a frozen release and checks it before anyone uses it: the release's hash from the API, the download's
 * ETag and Repr-Digest, and the hash recomputed from the file's canonical form. Any difference is a ReleaseFailure
 * with EXIT_MISMATCH; a refusal or no answer one with EXIT_FAILED.
 */
export async function fetchVerifiedRelease(ref: ReleaseRef, format: ReleaseFormat, server: Server): Promise<VerifiedRelease> {
  const base = server.baseUrl.replace(/\/+$/, "");
  const releasePath = `${base}/api/v1/sets/${encodeURIComponent(ref.slug)}/releases/${ref.number}`;
  const metaResponse = await get(releasePath, server.token);
  if (!metaResponse.ok) throw new ReleaseFailure(EXIT_FAILED, `the server refused (${metaResponse.status}): ${await apiMessage(metaResponse)}`);
  const meta = (await metaResponse.json()) as ReleaseMeta;
  const download = await get(`${releasePath}/download?format=${format}`, server.token);
  if (!download.ok) throw new ReleaseFailure(EXIT_FAILED, `the download was refused (${download.status}): ${await apiMessage(download)}`);
  const bytes = new Uint8Array(await download.arrayBuffer());
  const expectedFileHash = format === "json" ? meta.sha256 : meta.csvSha256;
  const mismatch = (why: string) => new ReleaseFailure(EXIT_MISMATCH, `hash mismatch, nothing written: ${why}`);
  const etag = download.headers.get("etag");
  if (etag !== `"${expectedFileHash}"`) throw mismatch(`the ETag ${etag ?? "(none)"} is not the release's "${expectedFileHash}"`);
  const digest = download.headers.get("repr-digest");
  const bytesSha256 = createHash("sha256").update(bytes).digest();
  if (digest && digest !== `sha-256=:${bytesSha256.toString("base64")}:`) throw mismatch("the bytes received are not the bytes the server sent (Repr-Digest)");
  if (format === "csv" && bytesSha256.toString("hex") !== meta.csvSha256) throw mismatch("the CSV bytes do not hash to the release's csvSha256");
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
  return { bytes, content: verified.content, sha256: verified.sha256, meta };
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

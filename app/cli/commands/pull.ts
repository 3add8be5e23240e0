import { randomBytes, createHash } from "node:crypto";
import { rename, rm, writeFile } from "node:fs/promises";
import http from "node:http";
import https from "node:https";
import path from "node:path";
import { promisify } from "node:util";
import { brotliDecompress, gunzip } from "node:zlib";
import { verifyReleaseText, type ReleaseFormat } from "../../domain/release-format";
import { type Command, type Io, UsageError } from "../command";
import { parseOptions } from "../args";

/** The download did not match the release's hash: nothing was written. */
export const EXIT_MISMATCH = 3;
/** The server or the network refused (unknown set, bad token, no answer). */
export const EXIT_FAILED = 1;

const usage = `usage: bandledger pull <set>@<release> --out <file> [--format json|csv] [--compression auto|br|gzip|none] [--url URL] [--token TOKEN]

Downloads a frozen release, verifies it and writes it only when every check holds.
  <set>@<release>  the set's short name and release number, e.g. hemt-baseline@3
  --out            where to write the file (written whole, through a temporary file and a rename)
  --format         json (default) or csv
  --compression    what to ask the server for: auto (default: brotli or gzip), br, gzip, or none
  --url            the Bandledger server; default $BANDLEDGER_URL or http://127.0.0.1:3000
  --token          a personal API token; default $BANDLEDGER_TOKEN
Checks: the release's hash from the API, the download's ETag and Repr-Digest (of the bytes as sent), the SHA-256
of the decoded bytes, and the file's own hash recomputed from its canonical form. Exit 0 written, 1 server or network error, 2 wrong arguments, 3 hash mismatch (no file).`;

const options = {
  out: { type: "string" },
  format: { type: "string" },
  compression: { type: "string" },
  url: { type: "string" },
  token: { type: "string" },
  help: { type: "boolean", short: "h" },
} as const;

class PullFailure extends Error {
  constructor(readonly exitCode: number, message: string) {
    super(message);
  }
}

type ReleaseMeta = { number: number; sha256: string; csvSha256: string; itemCount: number; set: { slug: string; name: string } };

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
    throw new PullFailure(EXIT_FAILED, `cannot reach ${new URL(url).origin} (${cause?.code ?? cause?.message ?? (e as Error).message})`);
  }
}

export type Compression = "auto" | "br" | "gzip" | "none";
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
      reject(new PullFailure(EXIT_FAILED, `cannot reach ${target.origin} (${code ?? e.message})`));
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

function parseTarget(text: string | undefined): { slug: string; number: number } {
  const match = /^([a-z0-9]+(?:-[a-z0-9]+)*)@(\d{1,7})$/.exec(text ?? "");
  if (!match || Number(match[2]) < 1) throw new UsageError(`name the release as <set>@<release>, e.g. hemt-baseline@3 (got "${text ?? ""}")`);
  return { slug: match[1], number: Number(match[2]) };
}

export async function pullRelease(input: { slug: string; number: number; format: ReleaseFormat; baseUrl: string; token: string; out: string; compression?: Compression }): Promise<{ sha256: string; bytes: number; encoding: string; meta: ReleaseMeta }> {
  const base = input.baseUrl.replace(/\/+$/, "");
  const releasePath = `${base}/api/v1/sets/${encodeURIComponent(input.slug)}/releases/${input.number}`;
  const metaResponse = await get(releasePath, input.token);
  if (!metaResponse.ok) throw new PullFailure(EXIT_FAILED, `the server refused (${metaResponse.status}): ${await apiMessage(metaResponse)}`);
  const meta = (await metaResponse.json()) as ReleaseMeta;
  const download = await getRaw(`${releasePath}/download?format=${input.format}`, input.token, ACCEPT[input.compression ?? "auto"]);
  if (download.status !== 200) throw new PullFailure(EXIT_FAILED, `the download was refused (${download.status}): ${rawMessage(download)}`);
  const expectedFileHash = input.format === "json" ? meta.sha256 : meta.csvSha256;
  const mismatch = (why: string) => new PullFailure(EXIT_MISMATCH, `hash mismatch, nothing written: ${why}`);
  const encoding = String(download.headers["content-encoding"] ?? "identity").trim().toLowerCase();
  if (encoding !== "identity" && encoding !== "gzip" && encoding !== "br") throw new PullFailure(EXIT_FAILED, `the server sent the download in an encoding this client does not read (${encoding})`);
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
  // The decoded bytes are the file itself. A CSV file's own SHA-256 is the release's csvSha256; a JSON file's
  // content hash (the release's sha256) is recomputed from its canonical form below.
  if (input.format === "csv") {
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
  if (verified.format !== input.format) throw mismatch(`asked for ${input.format}, received ${verified.format}`);
  if (verified.sha256 !== meta.sha256) throw mismatch(`the file's content hash ${verified.sha256} is not the release's ${meta.sha256}`);
  if (verified.content.set.slug !== input.slug || verified.content.release.number !== input.number) {
    throw mismatch(`the file holds ${verified.content.set.slug} release ${verified.content.release.number}`);
  }
  const target = path.resolve(input.out);
  const temporary = path.join(path.dirname(target), `.${path.basename(target)}.${randomBytes(6).toString("hex")}.part`);
  try {
    await writeFile(temporary, bytes, { flag: "wx" });
    await rename(temporary, target);
  } catch (e) {
    await rm(temporary, { force: true });
    throw new PullFailure(EXIT_FAILED, `cannot write ${input.out}: ${(e as Error).message}`);
  }
  return { sha256: meta.sha256, bytes: bytes.length, encoding, meta };
}

export const pullCommand: Command = {
  name: "pull",
  summary: "download a frozen release, verify its SHA-256 and write it (exit 3 on a mismatch)",
  usage,
  async run(args: string[], io: Io) {
    const { values, positionals } = parseOptions(args, options);
    if (values.help) {
      io.stdout(`${usage}\n`);
      return 0;
    }
    if (positionals.length !== 1) throw new UsageError(positionals.length ? `unexpected argument "${positionals[1]}"` : "name the release to pull, e.g. hemt-baseline@3");
    const { slug, number } = parseTarget(positionals[0]);
    const out = values.out as string | undefined;
    if (!out) throw new UsageError("--out is required");
    const format = (values.format as string | undefined) ?? "json";
    if (format !== "json" && format !== "csv") throw new UsageError(`--format must be json or csv (got "${format}")`);
    const compression = (values.compression as string | undefined) ?? "auto";
    if (!(compression in ACCEPT)) throw new UsageError(`--compression must be auto, br, gzip or none (got "${compression}")`);
    const token = (values.token as string | undefined) ?? process.env.BANDLEDGER_TOKEN;
    if (!token) throw new UsageError("a token is needed: --token or BANDLEDGER_TOKEN (create one on your account page)");
    const baseUrl = (values.url as string | undefined) ?? process.env.BANDLEDGER_URL ?? "http://127.0.0.1:3000";
    if (!/^https?:\/\//.test(baseUrl)) throw new UsageError(`--url must start with http:// or https:// (got "${baseUrl}")`);
    try {
      const result = await pullRelease({ slug, number, format, baseUrl, token, out, compression: compression as Compression });
      io.stdout(`ok ${out}: ${result.meta.set.name} release ${number}, ${result.meta.itemCount} values, sha256 ${result.sha256} (sent as ${result.encoding})\n`);
      return 0;
    } catch (e) {
      if (e instanceof PullFailure) {
        io.stderr(`bandledger pull: ${e.message}\n`);
        return e.exitCode;
      }
      throw e;
    }
  },
};

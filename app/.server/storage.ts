import { createHash, randomBytes } from "node:crypto";
import { mkdir, readFile, rename, rm, utimes, writeFile } from "node:fs/promises";
import path from "node:path";
import { data } from "react-router";
import { decodeCsvBytes, formatBytes } from "~/domain/csv-proposals";
import { env } from "./env";

export const MAX_ATTACHMENT_BYTES = 10 * 1024 * 1024;

export type StoredKind = "pdf" | "csv" | "text";
export const CONTENT_TYPES: Record<StoredKind, string> = {
  pdf: "application/pdf",
  csv: "text/csv; charset=utf-8",
  text: "text/plain; charset=utf-8",
};

export class StorageError extends Error {
  constructor(readonly code: "empty" | "too_large" | "type", message: string) {
    super(message);
    this.name = "StorageError";
  }
}

export type StoredFile = { sha256: string; sizeBytes: number; kind: StoredKind; contentType: string };

const SHA256 = /^[0-9a-f]{64}$/;

export function filesDir(): string {
  return path.join(env().BANDLEDGER_DATA_DIR, "files");
}

/** Where a file lives: files/<first two hex digits>/<sha256>, so no directory grows too large. */
export function storedFilePath(sha256: string): string {
  if (!SHA256.test(sha256)) throw new StorageError("type", "Not a SHA-256 digest.");
  return path.join(filesDir(), sha256.slice(0, 2), sha256);
}

const TEXT_CONTROL = /[\u0000-\u0008\u000B\u000E-\u001F\u007F]/;

/**
 * What a file is by its content, never by its name or the browser's word: a PDF by its magic bytes "%PDF-",
 * text by being UTF-8 without control characters (a CSV when its name says so).
 */
export function detectFileKind(bytes: Uint8Array, fileName: string): StoredKind | null {
  if (bytes.length >= 5 && Buffer.from(bytes.subarray(0, 5)).toString("latin1") === "%PDF-") return "pdf";
  const decoded = decodeCsvBytes(bytes, Number.POSITIVE_INFINITY);
  if (!decoded.ok || TEXT_CONTROL.test(decoded.text)) return null;
  return /\.(csv|tsv)$/i.test(fileName) ? "csv" : "text";
}

/**
 * Keeps a file content-addressed under the data folder after checking its size and type. Storing the same bytes
 * twice keeps one copy; a file appears under its name only once it is complete (written aside, then renamed).
 * A copy already there gets a fresh modification time, so the sweep of unreferenced files (housekeeping.ts) gives
 * the upload about to name it the whole grace period.
 */
export async function storeFile(bytes: Uint8Array, options: { fileName: string; allowed: readonly StoredKind[]; maxBytes?: number }): Promise<StoredFile> {
  const maxBytes = options.maxBytes ?? MAX_ATTACHMENT_BYTES;
  if (bytes.length === 0) throw new StorageError("empty", "The file is empty.");
  if (bytes.length > maxBytes) throw new StorageError("too_large", `The file is ${formatBytes(bytes.length)}; at most ${formatBytes(maxBytes)} is kept.`);
  const kind = detectFileKind(bytes, options.fileName);
  if (!kind || !options.allowed.includes(kind)) {
    const wanted = options.allowed.map((k) => (k === "pdf" ? "a PDF" : k === "csv" ? "a CSV file in UTF-8" : "a UTF-8 text file")).join(" or ");
    throw new StorageError("type", `“${options.fileName}” is not ${wanted} by its content.`);
  }
  const sha256 = createHash("sha256").update(bytes).digest("hex");
  const target = storedFilePath(sha256);
  if (!(await touched(target))) {
    await mkdir(path.dirname(target), { recursive: true });
    const temporary = `${target}.${randomBytes(6).toString("hex")}.part`;
    try {
      await writeFile(temporary, bytes, { flag: "wx", mode: 0o640 });
      await rename(temporary, target);
    } finally {
      await rm(temporary, { force: true });
    }
  }
  return { sha256, sizeBytes: bytes.length, kind, contentType: CONTENT_TYPES[kind] };
}

/** Refreshes the modification time of a stored file; false when there is none (never stored, or swept meanwhile). */
async function touched(file: string): Promise<boolean> {
  const now = new Date();
  try {
    await utimes(file, now, now);
    return true;
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === "ENOENT") return false;
    throw e;
  }
}

/** The bytes of a stored file, checked against its digest so a damaged file is never served as the original. */
export async function readStoredFile(sha256: string): Promise<Buffer> {
  const bytes = await readFile(storedFilePath(sha256));
  if (createHash("sha256").update(bytes).digest("hex") !== sha256) throw new Error(`stored file ${sha256} does not match its digest`);
  return bytes;
}

const FORM_TYPE = /^\s*(application\/x-www-form-urlencoded|multipart\/form-data)\s*(;|$)/i;

// A form action answers JSON, plain text or bytes it cannot read with a page that says so, not with a 500.
function unreadableForm(status: 400 | 415, message: string): never {
  throw data({ message }, { status, statusText: status === 415 ? "Not a form" : "The form could not be read" });
}

/** Whether every percent-escape and raw byte of a URL-encoded body is UTF-8 (URLSearchParams would put U+FFFD in silently). */
function urlEncodedIsUtf8(body: Buffer): boolean {
  if (!utf8Strict(body)) return false;
  try {
    for (const part of body.toString("utf8").split("&")) decodeURIComponent(part.replace(/\+/g, " "));
    return true;
  } catch {
    return false;
  }
}

function utf8Strict(bytes: Uint8Array): boolean {
  try {
    new TextDecoder("utf-8", { fatal: true }).decode(bytes);
    return true;
  } catch {
    return false;
  }
}

function refuseDeclaredOver(request: Request, maxBytes: number): void {
  const declared = Number(request.headers.get("content-length") ?? "0");
  if (declared > maxBytes) throw new StorageError("too_large", `The upload is ${formatBytes(declared)}; at most ${formatBytes(maxBytes)} is taken.`);
}

// Refusing a body while the client still sends it: cancelling at once resets the connection, and the client may
// lose the answer. Read and drop what keeps coming for a short while (a lingering close), then cancel.
const LINGER_MS = 2_000;
const LINGER_BYTES = 16 * 1024 * 1024;
function lingerThenCancel(reader: ReadableStreamDefaultReader<Uint8Array>): void {
  const cancel = () => void reader.cancel().catch(() => undefined);
  const timer = setTimeout(cancel, LINGER_MS);
  const until = Date.now() + LINGER_MS;
  void (async () => {
    let dropped = 0;
    try {
      for (;;) {
        const { done, value } = await reader.read();
        if (done) break;
        dropped += value.length;
        if (dropped > LINGER_BYTES || Date.now() > until) {
          cancel();
          break;
        }
      }
    } catch {
      /* cancelled, or the client went away: nothing left to drop */
    } finally {
      clearTimeout(timer);
    }
  })();
}

/** The raw body, read as it arrives and refused (StorageError "too_large") once it passes the limit. */
export async function readLimitedBody(request: Request, maxBytes: number): Promise<Buffer<ArrayBuffer>> {
  refuseDeclaredOver(request, maxBytes);
  if (!request.body) return Buffer.alloc(0);
  const chunks: Uint8Array[] = [];
  let total = 0;
  const reader = request.body.getReader();
  for (;;) {
    const { done, value } = await reader.read();
    if (done) break;
    total += value.length;
    if (total > maxBytes) {
      lingerThenCancel(reader);
      throw new StorageError("too_large", `The upload is over ${formatBytes(maxBytes)}; at most ${formatBytes(maxBytes)} is taken.`);
    }
    chunks.push(value);
  }
  return Buffer.concat(chunks);
}

/**
 * Reads a posted form, multipart or not, refusing a body over the limit before it is all in memory (React
 * Router's request.formData() would read any size). Another content type is a 415, a body that is not a
 * well-formed form (broken multipart, bytes that are not UTF-8) a 400; both thrown as a page with the reason.
 */
export async function readLimitedFormData(request: Request, maxBytes: number): Promise<FormData> {
  refuseDeclaredOver(request, maxBytes);
  const type = request.headers.get("content-type");
  if (type !== null && !FORM_TYPE.test(type)) {
    unreadableForm(415, `This address takes a form (application/x-www-form-urlencoded or multipart/form-data), not ${type.split(";")[0].trim().slice(0, 60) || "an empty content type"}.`);
  }
  const body = await readLimitedBody(request, maxBytes);
  // Bytes that do not say what they are are not read as a form: no browser sends a form without its type.
  if (type === null && body.length > 0) unreadableForm(415, "This address takes a form (application/x-www-form-urlencoded or multipart/form-data); the request did not say what it sent.");
  const contentType = type ?? "application/x-www-form-urlencoded";
  const multipart = /^\s*multipart\//i.test(contentType);
  if (!multipart && !urlEncodedIsUtf8(body)) unreadableForm(400, "The form is not well-formed UTF-8 (a raw byte or a %-escape is broken); send it again from the page.");
  try {
    return await new Response(body, { headers: { "content-type": contentType } }).formData();
  } catch {
    return unreadableForm(400, multipart ? "The multipart form is malformed (no boundary, or a part is cut off); send it again from the page." : "The form could not be read; send it again from the page.");
  }
}

// Generous for any plain form of ours (a pasted BibTeX entry, a long description), far below what hurts.
export const MAX_PLAIN_FORM_BYTES = 1024 * 1024;

/** request.formData() for the form actions: the same checks as readLimitedFormData, a body over 1 MB a 413 page. */
export async function readForm(request: Request): Promise<FormData> {
  try {
    return await readLimitedFormData(request, MAX_PLAIN_FORM_BYTES);
  } catch (e) {
    if (e instanceof StorageError) throw data({ message: e.message }, { status: 413, statusText: "The form is too large", headers: { Connection: "close" } });
    throw e;
  }
}

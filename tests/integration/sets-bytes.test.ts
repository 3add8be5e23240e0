import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdtempSync, writeFileSync } from "node:fs";
import http from "node:http";
import os from "node:os";
import path from "node:path";
import { brotliDecompressSync, gunzipSync } from "node:zlib";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { verifyReleaseText } from "~/domain/release-format";
import { startDemoServer, type DemoServer } from "./api-fixture";

let demo: DemoServer;
let token: string;
let cookie: string;

type Download = { status: number; bytes: Buffer; etag: string | null; cacheControl: string | null; vary: string | null; disposition: string | null; digest: string | null };

// The identity bytes: fetch would otherwise ask for gzip (and decode it); the encoded forms are checked below.
async function download(pathname: string, headers: Record<string, string> = {}): Promise<Download> {
  const r = await fetch(demo.url + pathname, { headers: { Authorization: `Bearer ${token}`, "Accept-Encoding": "identity", ...headers } });
  return {
    status: r.status,
    bytes: Buffer.from(await r.arrayBuffer()),
    etag: r.headers.get("etag"),
    cacheControl: r.headers.get("cache-control"),
    vary: r.headers.get("vary"),
    disposition: r.headers.get("content-disposition"),
    digest: r.headers.get("repr-digest"),
  };
}

const PATHS = [
  "/sets/hemt-baseline/releases/3.json",
  "/sets/hemt-baseline/releases/3.csv",
  "/api/v1/sets/hemt-baseline/releases/3/download?format=json",
  "/api/v1/sets/hemt-baseline/releases/3/download?format=csv",
  "/sets/hemt-baseline/releases/1.json",
];

async function all(): Promise<Map<string, Download>> {
  const out = new Map<string, Download>();
  for (const p of PATHS) out.set(p, await download(p));
  return out;
}

beforeAll(async () => {
  demo = await startDemoServer("bytes");
  token = await demo.token("priya.raman");
  cookie = await demo.cookie("priya.raman");
});
afterAll(async () => demo?.close());

describe("a frozen release downloads as the same bytes", () => {
  let first: Map<string, Download>;

  it("freeze → download → the hash verifies, with an immutable cache header, the ETag and the file name", async () => {
    first = await all();
    const json = first.get(PATHS[0])!;
    expect(json.status).toBe(200);
    const meta = await (await fetch(`${demo.url}/api/v1/sets/hemt-baseline/releases/3`, { headers: { Authorization: `Bearer ${token}` } })).json();
    const verified = await verifyReleaseText(json.bytes.toString("utf8"));
    expect(verified).toMatchObject({ ok: true, sha256: meta.sha256 });
    expect(json.etag).toBe(`"${meta.sha256}"`);
    // Members only: the member's own client keeps it for good, a shared cache never does, and the answer varies by credentials.
    expect(json.cacheControl).toBe("private, max-age=31536000, immutable");
    for (const download of first.values()) {
      expect(download.cacheControl).toBe("private, max-age=31536000, immutable");
      expect(download.vary).toMatch(/Cookie/);
      expect(download.vary).toMatch(/Authorization/);
    }
    expect(json.disposition).toBe('attachment; filename="hemt-baseline-r3.json"');
    expect(json.digest).toBe(`sha-256=:${createHash("sha256").update(json.bytes).digest("base64")}:`);
    const csv = first.get(PATHS[1])!;
    expect(csv.etag).toBe(`"${meta.csvSha256}"`);
    expect(createHash("sha256").update(csv.bytes).digest("hex")).toBe(meta.csvSha256);
    expect(csv.disposition).toBe('attachment; filename="hemt-baseline-r3.csv"');
    expect(await verifyReleaseText(csv.bytes.toString("utf8"))).toMatchObject({ ok: true, sha256: meta.sha256 });
    expect(first.get(PATHS[2])!.bytes.equals(json.bytes)).toBe(true);
    expect(first.get(PATHS[3])!.bytes.equals(csv.bytes)).toBe(true);
  });

  it("answers a matching If-None-Match with 304 and no body", async () => {
    const etag = first.get(PATHS[0])!.etag!;
    const again = await download(PATHS[0], { "If-None-Match": etag });
    expect(again.status).toBe(304);
    expect(again.bytes.length).toBe(0);
    expect(again.etag).toBe(etag);
    expect((await download(PATHS[0], { "If-None-Match": `W/${etag}, "other"` })).status).toBe(304);
    expect((await download(PATHS[0], { "If-None-Match": '"0000"' })).status).toBe(200);
  });

  it("after a restart of the app server", async () => {
    await demo.restart();
    const after = await all();
    for (const p of PATHS) {
      expect(after.get(p)!.status, p).toBe(200);
      expect(after.get(p)!.bytes.equals(first.get(p)!.bytes), p).toBe(true);
      expect(after.get(p)!.etag).toBe(first.get(p)!.etag);
    }
  });

  it("after a mariadb-dump backup and a restore", async () => {
    const file = path.join(mkdtempSync(path.join(os.tmpdir(), "bl-bytes-")), "dump.sql");
    const env = { ...process.env, DATABASE_URL: demo.t.url, MIGRATION_DATABASE_URL: demo.t.adminUrl };
    execFileSync("bash", ["scripts/backup.sh", "backup", file], { env, stdio: "pipe" });
    await demo.server.stop();
    await demo.t.pool.end();
    execFileSync("bash", ["scripts/backup.sh", "restore", file], { env, stdio: "pipe" });
    await demo.restart();
    const after = await all();
    for (const p of PATHS) {
      expect(after.get(p)!.status, p).toBe(200);
      expect(after.get(p)!.bytes.equals(first.get(p)!.bytes), p).toBe(true);
    }
  });
});

type Raw = { status: number; headers: http.IncomingHttpHeaders; body: Buffer };

/** The answer as sent, not decoded. */
function raw(pathname: string, headers: Record<string, string>): Promise<Raw> {
  return new Promise((resolve, reject) => {
    http.get(demo.url + pathname, { headers: { authorization: `Bearer ${token}`, ...headers } }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }));
    }).on("error", reject);
  });
}

const sha256Hex = (b: Buffer) => createHash("sha256").update(b).digest("hex");

describe("a frozen release in each content coding", () => {
  type Meta = { sha256: string; csvSha256: string };
  let meta: Meta;
  let identity: Record<"json" | "csv", Buffer>;
  beforeAll(async () => {
    meta = (await (await fetch(`${demo.url}/api/v1/sets/hemt-baseline/releases/3`, { headers: { Authorization: `Bearer ${token}` } })).json()) as Meta;
    identity = {
      json: (await download("/api/v1/sets/hemt-baseline/releases/3/download?format=json")).bytes,
      csv: (await download("/api/v1/sets/hemt-baseline/releases/3/download?format=csv")).bytes,
    };
  });

  // Decoded by gzip(1) for gzip, an implementation other than the server's zlib binding; brotli by node:zlib.
  const gunzipWithGzip = (bytes: Buffer) => {
    const file = path.join(mkdtempSync(path.join(os.tmpdir(), "bl-gz-")), "release.gz");
    writeFileSync(file, bytes);
    return execFileSync("gzip", ["-dc", file]);
  };
  const decoders = { gzip: gunzipWithGzip, br: (b: Buffer) => brotliDecompressSync(b), identity: (b: Buffer) => b };

  it.each([
    ["json", "br"], ["json", "gzip"], ["json", "identity"],
    ["csv", "br"], ["csv", "gzip"], ["csv", "identity"],
  ] as const)("%s as %s decodes to the identity bytes, whose hash is the release's", async (format, encoding) => {
    const r = await raw(`/api/v1/sets/hemt-baseline/releases/3/download?format=${format}`, { "accept-encoding": encoding });
    expect(r.status).toBe(200);
    expect(r.headers["content-encoding"]).toBe(encoding === "identity" ? undefined : encoding);
    expect(r.headers.vary).toBe("Cookie, Authorization, Accept-Encoding");
    expect(r.headers["cache-control"]).toBe("private, max-age=31536000, immutable");
    expect(Number(r.headers["content-length"])).toBe(r.body.length);
    // Repr-Digest is of the representation as sent (RFC 9530), so of the encoded bytes.
    expect(r.headers["repr-digest"]).toBe(`sha-256=:${createHash("sha256").update(r.body).digest("base64")}:`);
    const decoded = decoders[encoding](r.body);
    expect(decoded.equals(identity[format])).toBe(true);
    if (encoding !== "identity") expect(r.body.length).toBeLessThan(decoded.length / 2);
    const fileHash = format === "json" ? meta.sha256 : meta.csvSha256;
    expect(r.headers["x-bandledger-release-sha256"]).toBe(meta.sha256);
    // The CSV's own bytes hash to csvSha256; the JSON file states and verifies the content hash.
    if (format === "csv") expect(sha256Hex(decoded)).toBe(meta.csvSha256);
    expect(await verifyReleaseText(decoded.toString("utf8"))).toMatchObject({ ok: true, sha256: meta.sha256 });
    const etag = String(r.headers.etag);
    if (encoding === "identity") expect(etag).toBe(`"${fileHash}"`);
    else expect(etag).toBe(`"${fileHash}-${encoding}-${sha256Hex(r.body).slice(0, 16)}"`);
    // The same ETag for the same coding on every request, whichever worker answers.
    for (let i = 0; i < 4; i++) {
      const again = await raw(`/api/v1/sets/hemt-baseline/releases/3/download?format=${format}`, { "accept-encoding": encoding, connection: "close" });
      expect(again.headers.etag).toBe(etag);
      expect(again.body.equals(r.body)).toBe(true);
    }
  });

  it.each(["br", "gzip", "identity"] as const)("answers 304 for the ETag of the %s form, and 200 for another form's", async (encoding) => {
    const url = "/api/v1/sets/hemt-baseline/releases/3/download?format=json";
    const etag = String((await raw(url, { "accept-encoding": encoding })).headers.etag);
    const notModified = await raw(url, { "accept-encoding": encoding, "if-none-match": etag });
    expect(notModified.status).toBe(304);
    expect(notModified.body.length).toBe(0);
    expect(notModified.headers.etag).toBe(etag);
    expect(notModified.headers.vary).toBe("Cookie, Authorization, Accept-Encoding");
    expect((await raw(url, { "accept-encoding": encoding, "if-none-match": `W/${etag}` })).status).toBe(304);
    const other = encoding === "identity" ? "gzip" : "identity";
    const changed = await raw(url, { "accept-encoding": other, "if-none-match": etag });
    expect(changed.status).toBe(200);
    expect(changed.headers.etag).not.toBe(etag);
  });

  it("picks brotli when both are equally welcome, follows q-values, and sends identity for codings it does not hold", async () => {
    const url = "/api/v1/sets/hemt-baseline/releases/3/download?format=csv";
    const codingOf = async (accept: string) => (await raw(url, { "accept-encoding": accept })).headers["content-encoding"] ?? "identity";
    expect(await codingOf("gzip, deflate, br")).toBe("br");
    expect(await codingOf("br;q=0.5, gzip")).toBe("gzip");
    expect(await codingOf("*")).toBe("br");
    expect(await codingOf("deflate")).toBe("identity");
    expect(await codingOf("br;q=0, gzip;q=0")).toBe("identity");
    expect(await codingOf("")).toBe("identity");
  });

  it("compresses a page over 1 kB and a JSON answer over 1 kB as the request accepts", async () => {
    const page = await raw("/registry", { cookie, "accept-encoding": "gzip, deflate, br" });
    expect(page.status).toBe(200);
    expect(page.headers["content-encoding"]).toBe("br");
    expect(brotliDecompressSync(page.body).toString("utf8")).toContain("<table");
    const json = await raw("/api/v1/records?limit=50", { "accept-encoding": "gzip" });
    expect(json.headers["content-encoding"]).toBe("gzip");
    expect(JSON.parse(gunzipSync(json.body).toString("utf8")).records.length).toBeGreaterThan(0);
  });
});


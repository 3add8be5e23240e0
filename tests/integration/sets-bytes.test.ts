import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { verifyReleaseText } from "~/domain/release-format";
import { startDemoServer, type DemoServer } from "./api-fixture";

let demo: DemoServer;
let token: string;

type Download = { status: number; bytes: Buffer; etag: string | null; cacheControl: string | null; vary: string | null; disposition: string | null; digest: string | null };

async function download(pathname: string, headers: Record<string, string> = {}): Promise<Download> {
  const r = await fetch(demo.url + pathname, { headers: { Authorization: `Bearer ${token}`, ...headers } });
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

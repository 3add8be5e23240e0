import { execFile } from "node:child_process";
import { existsSync, mkdtempSync, readdirSync, readFileSync, writeFileSync } from "node:fs";
import http from "node:http";
import type { AddressInfo } from "node:net";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startDemoServer, type DemoServer } from "./api-fixture";

let demo: DemoServer;
let token: string;
let dir: string;
let proxy: http.Server;
let proxyUrl: string;
let mode: "pass" | "flip" | "flip-and-drop-digest" | "other-etag" | "flip-gzip" = "pass";

type Run = { code: number; stdout: string; stderr: string };

function cli(args: string[], env: Record<string, string> = {}): Promise<Run> {
  return new Promise((resolve) => {
    execFile(process.execPath, ["node_modules/tsx/dist/cli.mjs", "app/cli/main.ts", ...args], { env: { ...process.env, BANDLEDGER_TOKEN: "", ...env }, timeout: 30_000 }, (error, stdout, stderr) => {
      resolve({ code: error ? Number((error as { code?: number }).code ?? 1) : 0, stdout, stderr });
    });
  });
}

// A tiny forwarding proxy that can damage the download on its way, as a broken cache or link would.
function startProxy(): Promise<void> {
  proxy = http.createServer(async (req, res) => {
    if (mode === "flip-gzip" && req.url?.includes("/download")) {
      // The gzip form as sent, one byte of its deflate stream changed, the digest dropped: only decoding and the
      // hash of the decoded bytes can tell.
      http.get(demo.url + req.url, { headers: { authorization: req.headers.authorization ?? "", "accept-encoding": "gzip" } }, (up) => {
        const chunks: Buffer[] = [];
        up.on("data", (c: Buffer) => chunks.push(c));
        up.on("end", () => {
          const body = Buffer.concat(chunks);
          body[Math.floor(body.length / 2)] ^= 0x01;
          const headers = { ...up.headers };
          delete headers["repr-digest"];
          res.writeHead(up.statusCode ?? 502, headers);
          res.end(body);
        });
      });
      return;
    }
    const upstream = await fetch(demo.url + req.url, { headers: { authorization: req.headers.authorization ?? "", "accept-encoding": "identity" } });
    const body = Buffer.from(await upstream.arrayBuffer());
    const headers = Object.fromEntries([...upstream.headers].filter(([k]) => !["content-length", "content-encoding", "transfer-encoding", "connection", "keep-alive"].includes(k)));
    if (req.url?.includes("/download") && upstream.status === 200) {
      if (mode === "flip" || mode === "flip-and-drop-digest") {
        // A digit of the first value, deep inside the content.
        const at = body.indexOf(Buffer.from('"value": "')) + 10;
        body[at] = body[at] === 0x31 ? 0x32 : 0x31;
      }
      if (mode === "flip-and-drop-digest") delete headers["repr-digest"];
      if (mode === "other-etag") headers.etag = `"${"0".repeat(64)}"`;
    }
    res.writeHead(upstream.status, headers);
    res.end(body);
  });
  return new Promise((resolve) => proxy.listen(0, "127.0.0.1", () => {
    proxyUrl = `http://127.0.0.1:${(proxy.address() as AddressInfo).port}`;
    resolve();
  }));
}

beforeAll(async () => {
  demo = await startDemoServer("download");
  token = await demo.token("priya.raman");
  dir = mkdtempSync(path.join(os.tmpdir(), "bl-download-"));
  await startProxy();
});
afterAll(async () => {
  if (proxy) await new Promise<void>((r) => proxy.close(() => r()));
  await demo?.close();
});

const leftovers = () => readdirSync(dir).filter((f) => f.endsWith(".part"));

describe("bandledger download against the running server", () => {
  it("downloads hemt-baseline 3, verifies it and writes exactly the served bytes", async () => {
    const out = path.join(dir, "hemt-baseline-r3.json");
    const run = await cli(["download", "hemt-baseline", "3", "--out", out, "--url", demo.url, "--token", token]);
    expect(run.stderr).toBe("");
    expect(run.code).toBe(0);
    const meta = await (await fetch(`${demo.url}/api/v1/sets/hemt-baseline/releases/3`, { headers: { Authorization: `Bearer ${token}` } })).json();
    expect(run.stdout).toContain(`sha256 ${meta.sha256}`);
    const served = Buffer.from(await (await fetch(`${demo.url}/sets/hemt-baseline/releases/3.json`, { headers: { Authorization: `Bearer ${token}`, "Accept-Encoding": "identity" } })).arrayBuffer());
    expect(readFileSync(out).equals(served)).toBe(true);
    expect(leftovers()).toEqual([]);
  });

  it("takes the token from BANDLEDGER_TOKEN and writes the CSV form", async () => {
    const out = path.join(dir, "r2.csv");
    const run = await cli(["download", "hemt-baseline", "2", "--out", out, "--format", "csv", "--url", demo.url], { BANDLEDGER_TOKEN: token });
    expect(run.code).toBe(0);
    expect(readFileSync(out, "utf8")).toMatch(/^# schema: "bandledger\.release"\r\n/);
  });

  it.each(["json", "csv"] as const)("writes the same %s file with compression (brotli, gzip) as without", async (format) => {
    const written: Record<string, Buffer> = {};
    for (const compression of ["auto", "br", "gzip", "none"]) {
      const out = path.join(dir, `compare-${compression}.${format}`);
      const run = await cli(["download", "hemt-baseline", "3", "--out", out, "--format", format, "--compression", compression, "--url", demo.url, "--token", token]);
      expect(run.stderr).toBe("");
      expect(run.code).toBe(0);
      expect(run.stdout).toContain(`(sent as ${{ auto: "br", br: "br", gzip: "gzip", none: "identity" }[compression]})`);
      written[compression] = readFileSync(out);
    }
    for (const compression of ["auto", "br", "gzip"]) expect(written[compression].equals(written.none), compression).toBe(true);
    const served = Buffer.from(await (await fetch(`${demo.url}/sets/hemt-baseline/releases/3.${format}`, { headers: { Authorization: `Bearer ${token}`, "Accept-Encoding": "identity" } })).arrayBuffer());
    expect(written.none.equals(served)).toBe(true);
  });

  it("passes through an honest proxy", async () => {
    mode = "pass";
    const run = await cli(["download", "hemt-baseline", "1", "--out", path.join(dir, "via-proxy.json"), "--url", proxyUrl, "--token", token]);
    expect(run.code).toBe(0);
  });

  it.each([
    ["a flipped byte", "flip" as const],
    ["a flipped byte without the Repr-Digest header", "flip-and-drop-digest" as const],
    ["a foreign ETag", "other-etag" as const],
    ["a changed byte inside the gzip stream, without the Repr-Digest header", "flip-gzip" as const],
  ])("refuses a download with %s: exit 3, no file written, an existing file left alone", async (_label, m) => {
    mode = m;
    const fresh = path.join(dir, `corrupt-${m}.json`);
    const run = await cli(["download", "hemt-baseline", "3", "--out", fresh, "--url", proxyUrl, "--token", token]);
    expect(run.code).toBe(3);
    expect(run.stderr).toMatch(/^bandledger download: hash mismatch, nothing written: .+\n$/);
    expect(existsSync(fresh)).toBe(false);
    const kept = path.join(dir, "kept.json");
    writeFileSync(kept, "previous contents\n");
    expect((await cli(["download", "hemt-baseline", "3", "--out", kept, "--url", proxyUrl, "--token", token])).code).toBe(3);
    expect(readFileSync(kept, "utf8")).toBe("previous contents\n");
    expect(leftovers()).toEqual([]);
    mode = "pass";
  });

  it("exits 1 with one line for an unknown set, a bad token and an unreachable server", async () => {
    const out = path.join(dir, "never.json");
    const unknown = await cli(["download", "no-such-set", "1", "--out", out, "--url", demo.url, "--token", token]);
    expect(unknown.code).toBe(1);
    expect(unknown.stderr).toMatch(/^bandledger download: the server refused \(404\): .+\n$/);
    const badToken = await cli(["download", "hemt-baseline", "3", "--out", out, "--url", demo.url, "--token", "blt_" + "x".repeat(43)]);
    expect(badToken.code).toBe(1);
    expect(badToken.stderr).toMatch(/\(401\)/);
    const closed = await cli(["download", "hemt-baseline", "3", "--out", out, "--url", "http://127.0.0.1:9", "--token", token]);
    expect(closed.code).toBe(1);
    expect(closed.stderr).toMatch(/cannot reach/);
    expect(existsSync(out)).toBe(false);
  });

  it("answers the old words (pull, set@N) with the new form and exit 2, fetching and writing nothing", async () => {
    const out = path.join(dir, "old-words.json");
    const old = await cli(["pull", "hemt-baseline@3", "--out", out, "--url", demo.url, "--token", token]);
    expect(old.code).toBe(2);
    expect(old.stderr).toBe(`bandledger: "pull" is now "download": bandledger download hemt-baseline 3 --out ${out} --url ${demo.url} --token ${token}\n`);
    const at = await cli(["download", "hemt-baseline@3", "--out", out, "--url", demo.url, "--token", token]);
    expect(at.code).toBe(2);
    expect(at.stderr).toMatch(/^bandledger download: name the release as two arguments, the set and the release number: "hemt-baseline 3"[^\n]*\n$/);
    expect(existsSync(out)).toBe(false);
  });

  it("exits 2 for wrong arguments", async () => {
    for (const args of [["download", "hemt-baseline", "--out", "x.json", "--token", token], ["download", "hemt-baseline", "3", "--token", token], ["download", "hemt-baseline", "3", "--out", "x.json"], ["download", "hemt-baseline", "3", "--out", "x", "--format", "xml", "--token", token], ["download", "hemt-baseline", "3", "--out", "x", "--compression", "zip", "--token", token]]) {
      const run = await cli(args);
      expect(run.code, args.join(" ")).toBe(2);
      expect(run.stderr.trim().split("\n")).toHaveLength(1);
    }
  });
});

describe("bandledger verify, offline", () => {
  it("says ok for a downloaded file, both forms, and mismatch for a changed byte or a different expected hash", async () => {
    const json = path.join(dir, "hemt-baseline-r3.json");
    const ok = await cli(["verify", json]);
    expect(ok.code).toBe(0);
    expect(ok.stdout).toMatch(/^ok .*HEMT baseline release 3 \(json\), \d+ values, sha256 [0-9a-f]{64}\n$/);
    const sha = /sha256 ([0-9a-f]{64})/.exec(ok.stdout)![1];
    expect((await cli(["verify", json, "--sha256", sha])).code).toBe(0);
    expect((await cli(["verify", path.join(dir, "r2.csv")])).code).toBe(0);
    const other = await cli(["verify", json, "--sha256", "f".repeat(64)]);
    expect(other.code).toBe(3);
    expect(other.stdout).toMatch(/^mismatch /);
    const damaged = path.join(dir, "damaged.json");
    const bytes = readFileSync(json);
    bytes[bytes.indexOf(Buffer.from('"value": "')) + 10] ^= 0x01;
    writeFileSync(damaged, bytes);
    const bad = await cli(["verify", damaged]);
    expect(bad.code).toBe(3);
    expect(bad.stdout).toMatch(/^mismatch .*does not match the hash/);
    expect((await cli(["verify", path.join(dir, "missing.json")])).code).toBe(1);
  });
});

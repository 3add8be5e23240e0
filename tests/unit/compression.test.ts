import type { AddressInfo } from "node:net";
import http from "node:http";
import { brotliDecompressSync, gunzipSync } from "node:zlib";
import express from "express";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { compressAnswers } from "../../server/compress.js";

// The on-the-fly compression of the production server (server/compress.js) with the real middleware, on a server
// of its own: pages and JSON over 1 kB compressed as the request accepts, small answers and attachments never.
const text = "Γ-valley band gap 1.4225 eV at 300 K; ".repeat(200);
let server: http.Server;
let base: string;

beforeAll(async () => {
  const app = express();
  app.use(compressAnswers());
  app.get("/page", (_req, res) => res.type("text/html; charset=utf-8").send(`<p>${text}</p>`));
  app.get("/json", (_req, res) => res.json({ text }));
  app.get("/small", (_req, res) => res.json({ ok: true }));
  app.get("/file.csv", (_req, res) => res.type("text/csv").set("Content-Disposition", 'attachment; filename="file.csv"').send(text));
  server = app.listen(0, "127.0.0.1");
  await new Promise((r) => server.once("listening", r));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
});
afterAll(() => new Promise<void>((r) => server.close(() => r())));

/** The raw answer, not decoded (fetch would decode it). */
function raw(pathname: string, acceptEncoding: string): Promise<{ encoding: string | undefined; vary: string | undefined; body: Buffer }> {
  return new Promise((resolve, reject) => {
    http.get(`${base}${pathname}`, { headers: { "accept-encoding": acceptEncoding } }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => resolve({ encoding: res.headers["content-encoding"], vary: res.headers.vary, body: Buffer.concat(chunks) }));
    }).on("error", reject);
  });
}

describe("answers compressed on the fly", () => {
  it("compresses a page and JSON over 1 kB with brotli or gzip, as the request accepts, and says Vary", async () => {
    const page = await raw("/page", "gzip, deflate, br");
    expect(page.encoding).toBe("br");
    expect(page.vary).toMatch(/Accept-Encoding/i);
    expect(brotliDecompressSync(page.body).toString("utf8")).toBe(`<p>${text}</p>`);
    const json = await raw("/json", "gzip");
    expect(json.encoding).toBe("gzip");
    expect(JSON.parse(gunzipSync(json.body).toString("utf8"))).toEqual({ text });
    expect((await raw("/json", "identity")).encoding).toBeUndefined();
  });

  it("leaves an answer under 1 kB and any attachment as they are", async () => {
    expect((await raw("/small", "gzip, br")).encoding).toBeUndefined();
    const file = await raw("/file.csv", "gzip, br");
    expect(file.encoding).toBeUndefined();
    expect(file.body.toString("utf8")).toBe(text);
  });
});

import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { openApiDocument } from "~/.server/api/openapi";
import { startDemoServer, type DemoServer } from "./api-fixture";

// Old /api/v1 addresses answer as their successor for one release, each answer marked as RFC 9745 (Deprecation,
// a structured-field date) and RFC 8288 (Link rel="successor-version") say.

let demo: DemoServer;
let token: string;

beforeAll(async () => {
  demo = await startDemoServer("api-deprecation");
  token = await demo.token("mei.tanaka");
}, 120_000);

afterAll(async () => {
  await demo?.close();
});

const get = (path: string, auth: string | null) => fetch(`${demo.url}${path}`, { headers: auth ? { authorization: `Bearer ${auth}` } : {} });

describe("the account endpoint and its old address", () => {
  it("answers at /api/v1/account without deprecation headers", async () => {
    const r = await get("/api/v1/account", token);
    expect(r.status).toBe(200);
    expect((await r.json()).user).toMatchObject({ email: "mei.tanaka@kestrel-devices.test", role: "contributor" });
    expect(r.headers.get("deprecation")).toBeNull();
    expect(r.headers.get("link")).toBeNull();
  });

  it("answers the same at /api/v1/whoami, with Deprecation and Link on success and on refusals", async () => {
    const [now, old] = await Promise.all([get("/api/v1/account", token), get("/api/v1/whoami", token)]);
    expect(old.status).toBe(200);
    expect(await old.json()).toEqual(await now.json());
    expect(old.headers.get("cache-control")).toBe("no-store");
    for (const r of [old, await get("/api/v1/whoami", null), await fetch(`${demo.url}/api/v1/whoami`, { method: "POST", headers: { authorization: `Bearer ${token}` } })]) {
      // 2026-12-02T00:00:00Z as an RFC 9651 date: "@" and the Unix time.
      expect(r.headers.get("deprecation")).toBe("@1796169600");
      expect(r.headers.get("link")).toBe('</api/v1/account>; rel="successor-version"');
    }
    const anonymous = await get("/api/v1/whoami", null);
    expect(anonymous.status).toBe(401);
    expect((await anonymous.json()).error.code).toBeTruthy();
  });

  it("is documented: the new path plainly, the old one deprecated with both headers", () => {
    const doc = openApiDocument() as unknown as { paths: Record<string, { get?: { deprecated?: boolean; description?: string; responses: Record<string, { headers?: Record<string, unknown> }> } }> };
    expect(doc.paths["/api/v1/account"].get?.deprecated).toBeUndefined();
    const old = doc.paths["/api/v1/whoami"].get!;
    expect(old.deprecated).toBe(true);
    expect(old.description).toContain("use /api/v1/account");
    for (const response of Object.values(old.responses)) expect(Object.keys(response.headers ?? {})).toEqual(expect.arrayContaining(["Deprecation", "Link"]));
  });
});

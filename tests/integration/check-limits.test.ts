import http from "node:http";
import { and, eq, isNull } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiTokens } from "~/.server/db/schema";
import { MAX_ACTIVE_TOKENS } from "~/.server/tokens";
import { HttpClient } from "../support/route-access";
import { startDemoServer, type DemoServer } from "./api-fixture";

// The CPU of the physics checks is budgeted per person (over all their tokens and pages, and over the server's two
// worker processes), each worker process takes only a few check requests at once, and one person holds a bounded
// number of tokens.

const CHECK_RATE = 12;
let demo: DemoServer;

beforeAll(async () => {
  demo = await startDemoServer("checklimits", { BANDLEDGER_CHECK_RATE_PER_MINUTE: String(CHECK_RATE), BANDLEDGER_CHECK_CONCURRENCY: "1" });
});
afterAll(async () => demo?.close());

const body = JSON.stringify({ periodAngstrom: 5.65325, coefficients: [{ n: 1, valueEv: 0.1 }] });
const nfe = (token: string) =>
  fetch(`${demo.url}/api/v1/checks/nfe`, { method: "POST", body, headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json" } });

describe("the physics checks' budget per person", () => {
  it("counts every token and the signed-in pages of one person together, and answers 429 past it", async () => {
    const tokens = [await demo.token("tomas.okafor"), await demo.token("tomas.okafor"), await demo.token("tomas.okafor")];
    const statuses: number[] = [];
    for (let i = 0; i < CHECK_RATE - 2; i++) statuses.push((await nfe(tokens[i % tokens.length])).status);
    const browser = new HttpClient(demo.url);
    browser.cookies.set("__bandledger", (await demo.cookie("tomas.okafor")).split("=").slice(1).join("="));
    statuses.push((await browser.get("/checks/report?kind=new_record&material=GaAs&quantity=eg&valley=G&value=1.5&unit=eV")).status);
    statuses.push((await browser.get("/checks/nfe?period=5.65325&unit=angstrom&n=1&u=0.1")).status);
    expect(statuses.every((s) => s === 200)).toBe(true);
    const over = await nfe(tokens[2]);
    expect(over.status).toBe(429);
    expect(Number(over.headers.get("retry-after"))).toBeGreaterThanOrEqual(1);
    expect(((await over.json()) as { error: { message: string } }).error.message).toMatch(/physics checks a minute from your account/);
    const page = await browser.get("/checks/report?kind=new_record&material=GaAs&quantity=eg&valley=G&value=1.5&unit=eV");
    expect(page.status).toBe(429);
    // Another person's budget is their own.
    expect((await nfe(await demo.token("ravi.menon"))).status).toBe(200);
  });
});

describe("check requests at once", () => {
  // The cap is per worker process, so one worker: otherwise the second request may meet the other worker's count.
  beforeAll(async () => demo.restart({ workers: 1 }));

  it("answers 503 with Retry-After while the process already works on as many as it takes", async () => {
    const token = await demo.token("mei.tanaka");
    // The first request holds the only place while its body trickles in.
    const slow = new Promise<number>((resolve, reject) => {
      const req = http.request(`${demo.url}/api/v1/checks/nfe`, {
        method: "POST",
        headers: { Authorization: `Bearer ${token}`, "Content-Type": "application/json", "Content-Length": String(body.length) },
      }, (res) => {
        res.resume();
        resolve(res.statusCode ?? 0);
      });
      req.on("error", reject);
      req.write(body.slice(0, 10));
      setTimeout(() => req.end(body.slice(10)), 1500);
    });
    await new Promise((r) => setTimeout(r, 500));
    const busy = await nfe(await demo.token("hanna.lindqvist"));
    expect(busy.status).toBe(503);
    expect(busy.headers.get("retry-after")).toBe("1");
    expect(((await busy.json()) as { error: { code: string } }).error.code).toBe("busy");
    expect(await slow).toBe(200);
    expect((await nfe(await demo.token("hanna.lindqvist"))).status).toBe(200);
  });
});

describe("tokens per person", () => {
  it(`lets one person hold at most ${MAX_ACTIVE_TOKENS} active tokens, with the reason at the name field`, async () => {
    const priya = await demo.userId("priya.raman");
    const client = await HttpClient.signedIn(demo.url, priya);
    const active = async () => (await demo.t.db.select().from(apiTokens).where(and(eq(apiTokens.userId, priya), isNull(apiTokens.revokedAt)))).length;
    while ((await active()) < MAX_ACTIVE_TOKENS) expect((await client.post("/account", { intent: "create-token", tokenName: `pipeline ${await active()}` })).status).toBe(200);
    const refused = await client.post("/account", { intent: "create-token", tokenName: "one too many" });
    expect(refused.status).toBe(400);
    const html = await refused.text();
    expect(html).toMatch(/id="token-name-error"[^>]*>[^<]*the most one person may hold/);
    expect(html).toContain('value="one too many"');
    expect(await active()).toBe(MAX_ACTIVE_TOKENS);
    const [first] = await demo.t.db.select().from(apiTokens).where(and(eq(apiTokens.userId, priya), isNull(apiTokens.revokedAt)));
    expect((await client.post("/account", { intent: "revoke-token", tokenId: String(first.id) })).status).toBe(302);
    expect((await client.post("/account", { intent: "create-token", tokenName: "after a revoke" })).status).toBe(200);
  });
});

import { spawnSync } from "node:child_process";
import { mkdtempSync, readFileSync } from "node:fs";
import http from "node:http";
import os from "node:os";
import path from "node:path";
import { eq } from "drizzle-orm";
import mysql from "mysql2/promise";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiTokens, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { generateToken } from "~/.server/tokens";
import { loadDemo } from "../../seed-data/load";
import { TEAM_DOMAIN } from "../../seed-data/team";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { isAlive, sleep, waitFor } from "../support/faults";

// The production server as several worker processes on one port (server/main.ts): a per-minute API limit that holds
// across workers, a killed worker replaced while the port keeps answering, and a stop that leaves no process and no
// database connection behind.

const RATE_LIMIT = 60;
let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let token: string;

type Answer = { status: number; body: string };

/** One request on a connection of its own: node:cluster hands each new connection to the next worker in turn. */
function freshGet(url: string, headers: Record<string, string> = {}): Promise<Answer> {
  return new Promise((resolve, reject) => {
    const req = http.get(url, { agent: false, timeout: 10_000, headers: { connection: "close", ...headers } }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString("utf8") }));
      res.on("error", reject);
    });
    req.on("timeout", () => req.destroy(new Error(`no answer from ${url} within 10 s`)));
    req.on("error", reject);
  });
}

/** The request log since `from`: which worker answered how many requests for `pathPrefix`. */
function answersByWorker(server: AppServer, pathPrefix: string, from = 0): Map<string, number> {
  const counts = new Map<string, number>();
  for (const line of readFileSync(server.logFile, "utf8").slice(from).split("\n")) {
    const m = /^(w\d+) GET (\S+)/.exec(line);
    if (m && m[2].startsWith(pathPrefix)) counts.set(m[1], (counts.get(m[1]) ?? 0) + 1);
  }
  return counts;
}

/**
 * The app's connections to its database, as SHOW PROCESSLIST lists them to a connection of the test's own. It signs
 * in as the app's own runtime account: without the PROCESS privilege an account sees only its own threads.
 */
async function appConnections(): Promise<number> {
  const conn = await mysql.createConnection({ uri: t.url });
  try {
    const [rows] = (await conn.query("SHOW FULL PROCESSLIST")) as unknown as [{ Id: number; db: string | null }[]];
    const own = (await conn.query("SELECT CONNECTION_ID() AS id")) as unknown as [{ id: number }[]];
    return rows.filter((r) => r.db === t.name && Number(r.Id) !== Number(own[0][0].id)).length;
  } finally {
    await conn.end();
  }
}

const start = (extra: { ownProcessGroup?: boolean; extraEnv?: Record<string, string> } = {}) =>
  startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, workers: 2, ...extra, extraEnv: { BANDLEDGER_API_RATE_PER_MINUTE: String(RATE_LIMIT), ...extra.extraEnv } });

beforeAll(async () => {
  t = await freshDatabase("cluster");
  await loadDemo(t.db);
  const [reader] = await t.db.select({ id: users.id }).from(users).where(eq(users.email, `priya.raman@${TEAM_DOMAIN}`));
  const made = generateToken();
  await t.db.insert(apiTokens).values({ userId: reader.id, name: "cluster test", tokenHash: made.hash, prefix: made.prefix });
  token = made.token;
  // Only the app's own connections to this database are left for SHOW PROCESSLIST to find.
  await t.pool.end();
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-cluster-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
});
afterAll(async () => {
  await sink?.close();
  await t?.drop();
});

describe("two worker processes on one port", () => {
  let server: AppServer;
  beforeAll(async () => {
    server = await start();
  });
  afterAll(async () => server?.stop());

  it(`holds the API limit of ${RATE_LIMIT} a minute across both workers within 10 %`, async () => {
    expect(server.workerPids()).toHaveLength(2);
    const from = readFileSync(server.logFile, "utf8").length;
    const statuses: number[] = [];
    const total = RATE_LIMIT * 2;
    // Eight at a time, each on a new connection, so the requests are spread over both workers.
    for (let i = 0; i < total; i += 8) {
      const batch = await Promise.all(Array.from({ length: Math.min(8, total - i) }, () => freshGet(`${server.url}/api/v1/quantities`, { authorization: `Bearer ${token}` })));
      statuses.push(...batch.map((a) => a.status));
    }
    const ok = statuses.filter((s) => s === 200).length;
    const limited = statuses.filter((s) => s === 429).length;
    await sleep(200); // the last log lines
    const byWorker = answersByWorker(server, "/api/v1/quantities", from);
    console.log(`cluster: ${total} requests, ${ok} answered 200 and ${limited} 429; by worker: ${JSON.stringify(Object.fromEntries(byWorker))}`);
    expect(ok + limited).toBe(total);
    expect([...byWorker.keys()]).toHaveLength(2);
    for (const n of byWorker.values()) expect(n).toBeGreaterThanOrEqual(total / 4);
    // Counted per worker, each of the two would have allowed RATE_LIMIT: about twice the limit in all.
    expect(Math.abs(ok - RATE_LIMIT)).toBeLessThanOrEqual(RATE_LIMIT * 0.1);
  });

  it("keeps the port answering when a worker is killed with SIGKILL, and starts another in its place", async () => {
    const before = server.workerPids();
    expect(before).toHaveLength(2);
    const [victim, survivor] = before;
    const from = readFileSync(server.logFile, "utf8").length;
    process.kill(victim, "SIGKILL");
    // node:cluster hands each new connection to a worker over IPC; one handed over in the instant of the kill is
    // lost with the worker, like the requests it was serving. Once the primary has seen the death, which it logs,
    // every new connection must get an answer, before and after the replacement listens.
    await waitFor(() => /killed by SIGKILL/.test(readFileSync(server.logFile, "utf8").slice(from)), { timeoutMs: 10_000, what: "the primary to log the killed worker" });
    const answers: number[] = [];
    const deadline = Date.now() + 30_000;
    for (;;) {
      answers.push((await freshGet(`${server.url}/healthz`)).status);
      const now = server.workerPids();
      const log = readFileSync(server.logFile, "utf8").slice(from);
      if (now.length === 2 && !now.includes(victim) && /started in place of worker \d+[\s\S]*is listening/.test(log)) break;
      if (Date.now() > deadline) throw new Error(`no replacement after 30 s: workers ${now.join(", ")}`);
    }
    console.log(`cluster: ${answers.length} health checks while worker ${victim} was replaced: ${answers.filter((s) => s === 200).length} answered 200`);
    expect(answers.every((s) => s === 200)).toBe(true);
    const after = server.workerPids();
    expect(after).toContain(survivor);
    expect(after).not.toContain(victim);
    const log = readFileSync(server.logFile, "utf8").slice(from);
    expect(log).toMatch(/worker \d+ \(pid \d+\) killed by SIGKILL after \d+ s; starting a replacement/);
    // Both workers answer again, the new one included.
    const fromNew = readFileSync(server.logFile, "utf8").length;
    for (let i = 0; i < 10; i++) expect((await freshGet(`${server.url}/healthz`)).status).toBe(200);
    await sleep(200);
    expect([...answersByWorker(server, "/healthz", fromNew).keys()]).toHaveLength(2);
  });
});

describe("stopping the server", () => {
  it.each([
    ["Ctrl-C (SIGINT to the whole process group)", "group" as const],
    ["SIGTERM to the primary (as npm start's clean-up sends)", "primary" as const],
  ])("%s leaves no process and no open database connection", async (_label, how) => {
    const server = await start({ ownProcessGroup: true });
    const pids = [server.process.pid!, ...server.workerPids()];
    expect(pids).toHaveLength(3);
    // Both workers open pool connections: ten health checks, each on a new connection, reach both.
    for (let i = 0; i < 10; i++) expect((await freshGet(`${server.url}/healthz`)).status).toBe(200);
    expect(await appConnections()).toBeGreaterThanOrEqual(2);
    const exited = new Promise<number | null>((resolve) => server.process.once("exit", (code) => resolve(code)));
    if (how === "group") process.kill(-server.process.pid!, "SIGINT");
    else server.process.kill("SIGTERM");
    expect(await exited).toBe(0);
    await waitFor(() => pids.every((pid) => !isAlive(pid)), { timeoutMs: 10_000, what: "every process of the server to be gone" });
    await waitFor(async () => (await appConnections()) === 0, { timeoutMs: 5_000, what: "the app's database connections to close" });
    expect(readFileSync(server.logFile, "utf8")).toMatch(/stopped \(exited with code 0\)[\s\S]*stopped \(exited with code 0\)/);
  });

  it("refuses a worker count that is not a whole number from 1, with one line naming the variable", () => {
    const run = spawnSync(process.execPath, ["--import", "tsx", "server/main.ts"], { env: { ...process.env, BANDLEDGER_WORKERS: "0", PORT: "0" }, encoding: "utf8", timeout: 30_000 });
    expect(run.status).toBe(2);
    expect(run.stderr).toMatch(/BANDLEDGER_WORKERS must be a whole number from 1 to 256 \(got "0"\)/);
  });
});

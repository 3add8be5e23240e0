import { mkdirSync, mkdtempSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { parseArgs } from "node:util";
import autocannon from "autocannon";
import { drizzle } from "drizzle-orm/mysql2";
import type mysql from "mysql2/promise";
import { createPool } from "~/.server/db/client";
import { createDatabase, dropDatabase, runMigrations } from "~/.server/db/migrate";
import * as schema from "~/.server/db/schema";
import { startSink } from "~/.server/mail/sink";
import { generateToken } from "~/.server/tokens";
import { loadDemo } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { clusterDatabase, createClusterDatabase, dropClusterDatabase, ensureCluster } from "../support/cluster";
import { baseDatabaseUrl } from "../support/env";
import { sessionCookieValue } from "../support/session";

// npm run bench:cluster: write paths of the production build on one MariaDB (the embedded server) and on the
// three-node Galera cluster, driven by autocannon from this process. Prints a table with the ratio cluster ÷ one
// node and writes test-artifacts/bench/cluster.json. Rows:
//  - the nearly-free-electron check (POST /api/v1/checks/nfe): a token read, the computation, no write;
//  - a proposal submitted through the form with potential coefficients (POST /proposals/new): its NFE check, the
//    proposal row, its audit row and a notice to each lead of the family, each a commit;
//  - the same proposal without coefficients: the Varshni and range checks only, so the commits weigh more.
// The values are the demo's GaAs Γ gap at 300 K, 1.4225 eV of [V01] (Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys.
// 89, 5815 (2001), from memory) with a model potential; they only give the paths real work.

const { values: args } = parseArgs({
  options: {
    // A proposal costs the app a few hundred milliseconds of CPU on a busy machine: few connections for long
    // enough that every row counts dozens of answers, not the handful that finish inside a short window.
    duration: { type: "string", default: "10" },
    connections: { type: "string", default: "4" },
  },
});
const DURATION = Number(args.duration);
const CONNECTIONS = Number(args.connections);

type Target = { name: string; apps: AppServer[]; cookie: string; token: string; recordId: number };
type Row = { target: string; path: string; requestsPerSecond: number; p50Ms: number; p99Ms: number; ok: number; bad: number; errors: number };

function run(opts: autocannon.Options): Promise<autocannon.Result> {
  return new Promise((resolve, reject) => {
    autocannon({ duration: DURATION, ...opts }, (err, result) => (err ? reject(err) : resolve(result)));
  });
}

async function prepare(pool: mysql.Pool, databaseUrl: string): Promise<{ cookie: string; token: string; recordId: number }> {
  await loadDemo(drizzle(pool, { schema, mode: "default" }));
  const [[tomas]] = (await pool.query("SELECT id FROM users WHERE email LIKE 'tomas.okafor@%'")) as unknown as [{ id: number }[]];
  const [[record]] = (await pool.query(
    "SELECT r.id FROM records r JOIN materials m ON m.id = r.material_id JOIN quantities q ON q.id = r.quantity_id WHERE m.`key` = 'GaAs' AND q.`key` = 'eg' AND r.condition_key = 'T=300|V=G|x='")) as unknown as [{ id: number }[]];
  const { token, prefix, hash } = generateToken();
  await pool.query("INSERT INTO api_tokens (user_id, name, token_hash, prefix) VALUES (?, 'bench', ?, ?)", [tomas.id, hash, prefix]);
  return { cookie: `__bandledger=${await sessionCookieValue(tomas.id, databaseUrl)}`, token, recordId: record.id };
}

function cases(app: AppServer, t: Target): { path: string; opts: autocannon.Options; expect: "2xx" | "3xx" }[] {
  const form = new URLSearchParams({
    intent: "submit", kind: "revision", recordId: String(t.recordId), material: "GaAs", quantity: "eg", value: "1.4225", unit: "eV", method: "compilation",
    "source.kind": "doi", "source.doi": "10.1063/1.1368156", "source.title": "Band parameters for III–V compound semiconductors and their alloys",
    locator: "GaAs parameter table", notes: "benchmark proposal", periodAngstrom: "5.65325",
    "potentialCoefficients.0.n": "1", "potentialCoefficients.0.valueEv": "0.71125", "potentialCoefficients.1.n": "2", "potentialCoefficients.1.valueEv": "0.0250",
  }).toString();
  const plain = new URLSearchParams({
    intent: "submit", kind: "revision", recordId: String(t.recordId), material: "GaAs", quantity: "eg", value: "1.4225", unit: "eV", method: "compilation",
    "source.kind": "doi", "source.doi": "10.1063/1.1368156", "source.title": "Band parameters for III–V compound semiconductors and their alloys",
    locator: "GaAs parameter table", notes: "benchmark proposal",
  }).toString();
  return [
    {
      path: "NFE check (POST /api/v1/checks/nfe)", expect: "2xx",
      opts: {
        url: `${app.url}/api/v1/checks/nfe`, method: "POST",
        headers: { authorization: `Bearer ${t.token}`, "content-type": "application/json" },
        body: JSON.stringify({ periodAngstrom: 5.65325, coefficients: [{ n: 1, valueEv: 0.71125 }, { n: 2, valueEv: 0.025 }], gap: 1, statedGapEv: 1.4225, toleranceEv: 0.01 }),
      },
    },
    {
      path: "proposal with U_n (POST /proposals/new)", expect: "3xx",
      opts: {
        url: `${app.url}/proposals/new?record=${t.recordId}&kind=revision`, method: "POST",
        headers: { cookie: t.cookie, origin: app.url, "content-type": "application/x-www-form-urlencoded" },
        body: form,
      },
    },
    {
      path: "proposal, value only (POST /proposals/new)", expect: "3xx",
      opts: {
        url: `${app.url}/proposals/new?record=${t.recordId}&kind=revision`, method: "POST",
        headers: { cookie: t.cookie, origin: app.url, "content-type": "application/x-www-form-urlencoded" },
        body: plain,
      },
    },
  ];
}

async function measure(t: Target): Promise<Row[]> {
  const rows: Row[] = [];
  const perApp = t.apps.map((a) => cases(a, t));
  for (let i = 0; i < perApp[0].length; i++) {
    const share = Math.max(1, Math.round(CONNECTIONS / t.apps.length));
    await Promise.all(perApp.map((c) => run({ ...c[i].opts, connections: share, duration: 1 }))); // warm-up
    const results = await Promise.all(perApp.map((c) => run({ ...c[i].opts, connections: share })));
    const ok = results.reduce((n, r) => n + (perApp[0][i].expect === "2xx" ? r["2xx"] : r["3xx"]), 0);
    const total = results.reduce((n, r) => n + r.requests.total, 0);
    rows.push({
      target: t.name, path: perApp[0][i].path,
      requestsPerSecond: results.reduce((n, r) => n + r.requests.average, 0),
      p50Ms: Math.max(...results.map((r) => r.latency.p50)), p99Ms: Math.max(...results.map((r) => r.latency.p99)),
      ok, bad: total - ok, errors: results.reduce((n, r) => n + r.errors, 0),
    });
  }
  return rows;
}

const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-bench-cluster-mail-"));
const sink = await startSink({ port: 0, dir: mailboxDir });
const env = (extra: Record<string, string>) => ({ BANDLEDGER_API_RATE_PER_MINUTE: "100000000", BANDLEDGER_DATA_DIR: mkdtempSync(path.join(os.tmpdir(), "bl-bench-cluster-data-")), ...extra });
const rows: Row[] = [];

// One MariaDB: the embedded server of scripts/db.sh.
{
  console.error("bench:cluster: one node (the embedded MariaDB)…");
  const base = baseDatabaseUrl();
  const name = `bandledger_test_bench_one_${process.pid}`;
  const url = await createDatabase(base, name);
  await runMigrations(url);
  const pool = createPool(url, 4);
  const ctx = await prepare(pool, url);
  await pool.end();
  const app = await startAppServer({ databaseUrl: url, smtpPort: sink.port, mailboxDir, extraEnv: env({}) });
  try {
    rows.push(...(await measure({ name: "one node", apps: [app], ...ctx })));
  } finally {
    await app.stop();
    await dropDatabase(base, name);
  }
}

// The cluster: one app process on node 1, then two app processes on nodes 1 and 2 sharing the connections.
{
  console.error("bench:cluster: the three-node cluster…");
  ensureCluster();
  const name = await createClusterDatabase("bench");
  const c = clusterDatabase(name);
  const ctx = await prepare(c.pools[0], c.urls[0]);
  await c.drop();
  const start = (first: 1 | 2) => startAppServer({ databaseUrl: c.urls[first - 1], smtpPort: sink.port, mailboxDir, extraEnv: env({ DATABASE_URLS: c.databaseUrls(first) }) });
  const a = await start(1);
  try {
    rows.push(...(await measure({ name: "cluster, 1 app on node 1", apps: [a], ...ctx })));
    const b = await start(2);
    try {
      rows.push(...(await measure({ name: "cluster, 2 apps on nodes 1+2", apps: [a, b], ...ctx })));
    } finally {
      await b.stop();
    }
  } finally {
    await a.stop();
    await dropClusterDatabase(name);
  }
}
await sink.close();

const one = (p: string) => rows.find((r) => r.target === "one node" && r.path === p)!;
const fmt = (n: number, d = 0) => n.toFixed(d).padStart(9);
console.log(`\nBandledger write paths, one MariaDB vs the three-node Galera cluster — ${os.cpus().length} cores, ${os.cpus()[0]?.model ?? "unknown CPU"}, Node ${process.version}, ${CONNECTIONS} connections, ${DURATION} s per row, load average ${os.loadavg().map((l) => l.toFixed(1)).join(" ")}`);
console.log(`${"path".padEnd(45)}${"target".padEnd(30)}${"req/s".padStart(9)}${"p50 ms".padStart(9)}${"p99 ms".padStart(9)}${"÷ one".padStart(9)}${"bad".padStart(6)}`);
const table = rows.map((r) => {
  const ratio = r.requestsPerSecond / one(r.path).requestsPerSecond;
  console.log(`${r.path.padEnd(45)}${r.target.padEnd(30)}${fmt(r.requestsPerSecond)}${fmt(r.p50Ms, 1)}${fmt(r.p99Ms, 1)}${fmt(ratio, 2)}${String(r.bad + r.errors).padStart(6)}`);
  return { ...r, ratioToOneNode: ratio };
});
mkdirSync("test-artifacts/bench", { recursive: true });
writeFileSync("test-artifacts/bench/cluster.json", JSON.stringify({
  at: new Date().toISOString(), machine: { cores: os.cpus().length, cpu: os.cpus()[0]?.model, node: process.version, memoryGiB: Math.round(os.totalmem() / 2 ** 30) },
  loadAverage: os.loadavg(), connections: CONNECTIONS, durationSeconds: DURATION, rows: table,
}, null, 2));
console.log("\n(÷ one = throughput ÷ the same path on one MariaDB; written to test-artifacts/bench/cluster.json)");
process.exit(0);

import { execFileSync } from "node:child_process";
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { parseArgs } from "node:util";
import autocannon from "autocannon";
import mysql from "mysql2/promise";
import { startSink } from "~/.server/mail/sink";
import { generateSyntheticRegistry } from "../../seed-data/synthetic";
import { startAppServer, type AppServer } from "../support/app-server";
import { createTestDatabase } from "../support/db";
import { sessionCookieValue } from "../support/session";

// npm run bench: the production build over generated registries of two sizes, driven by autocannon from this
// process (the server is a second process on loopback). Prints a table and writes test-artifacts/bench/http.json.

const { values: args } = parseArgs({
  options: {
    sizes: { type: "string", default: "1000,100000" },
    duration: { type: "string", default: "5" },
    connections: { type: "string", default: "20" },
    "set-size": { type: "string", default: "1000" },
    only: { type: "string" },
    out: { type: "string" },
  },
});
const SIZES = args.sizes!.split(",").map((s) => Number.parseInt(s, 10));
const DURATION = Number(args.duration);
const CONNECTIONS = Number(args.connections);
const SET_SIZE = Number(args["set-size"]);

type Row = { name: string; requestsPerSecond: number; p50Ms: number; p99Ms: number; non2xx: number; errors: number };

async function prepare(revisions: number) {
  const name = `bandledger_test_bench_${revisions}_${process.pid}`;
  const { url, drop } = await createTestDatabase(name);
  // At least SET_SIZE records at every size (one revision each at 1,000), so the frozen set and a filtered page
  // hold the same number of values in both runs and the growth ratio compares like with like.
  const summary = await generateSyntheticRegistry(url, { revisions, revisionsPerRecord: Math.max(1, Math.min(3, Math.floor(revisions / SET_SIZE))) });
  const conn = await mysql.createConnection({ uri: url });
  const [[admin]] = (await conn.query("SELECT id FROM users WHERE role = 'admin' AND active = 1 ORDER BY id LIMIT 1")) as unknown as [{ id: number }[]];
  // A frozen set of SET_SIZE values, written through the product's own freeze service below.
  await conn.query("INSERT INTO parameter_sets (slug, name, purpose, created_by) VALUES ('bench-set', 'Bench set', 'benchmark', ?)", [admin.id]);
  await conn.query(
    `INSERT INTO set_members (set_id, record_id, added_by)
     SELECT (SELECT id FROM parameter_sets WHERE slug = 'bench-set'), r.id, ? FROM records r
     WHERE r.status = 'active' AND r.current_revision_id IS NOT NULL ORDER BY r.id LIMIT ?`, [admin.id, SET_SIZE]);
  const { generateToken } = await import("~/.server/tokens");
  const { token, prefix, hash } = generateToken();
  await conn.query("INSERT INTO api_tokens (user_id, name, token_hash, prefix) VALUES (?, 'bench', ?, ?)", [admin.id, hash, prefix]);
  const [[anyMaterial]] = (await conn.query("SELECT f.`key` AS family FROM materials m JOIN material_families f ON f.id = m.family_id ORDER BY m.id LIMIT 1")) as unknown as [{ family: string }[]];
  await conn.end();
  return { drop, name, url, adminId: admin.id, token, family: anyMaterial.family, summary };
}

async function freeze(url: string, adminId: number) {
  process.env.DATABASE_URL = url;
  const { closeDb } = await import("~/.server/db/client");
  const { loadUser } = await import("~/.server/permissions");
  const { freezeSet } = await import("~/.server/sets/service");
  const actor = await loadUser(adminId);
  const written = await freezeSet(actor!, "bench-set", {}, null);
  await closeDb();
  return written;
}

function run(opts: autocannon.Options): Promise<autocannon.Result> {
  return new Promise((resolve, reject) => {
    autocannon({ connections: CONNECTIONS, duration: DURATION, ...opts }, (err, result) => (err ? reject(err) : resolve(result)));
  });
}

async function measure(server: AppServer, ctx: { cookie: string; token: string; family: string; sha256: string }): Promise<Row[]> {
  const bearer = { authorization: `Bearer ${ctx.token}` };
  const cases: { name: string; opts: autocannon.Options }[] = [
    { name: "health (floor)", opts: { url: `${server.url}/healthz` } },
    { name: "registry page, filtered", opts: { url: `${server.url}/registry?family=${ctx.family}&sort=value&dir=desc&page=2`, headers: { cookie: ctx.cookie } } },
    { name: "API records query", opts: { url: `${server.url}/api/v1/records?family=${ctx.family}&limit=50`, headers: bearer } },
    { name: "release download (JSON)", opts: { url: `${server.url}/api/v1/sets/bench-set/releases/1/download?format=json`, headers: bearer } },
    { name: "release download, 304", opts: { url: `${server.url}/api/v1/sets/bench-set/releases/1/download?format=json`, headers: { ...bearer, "if-none-match": `"${ctx.sha256}"` } } },
    {
      name: "NFE check (POST)",
      opts: {
        url: `${server.url}/api/v1/checks/nfe`, method: "POST",
        headers: { ...bearer, "content-type": "application/json" },
        body: JSON.stringify({ periodAngstrom: 5.65325, coefficients: [{ n: 1, valueEv: 0.5 }, { n: 2, valueEv: 0.2 }], gap: 1, statedGapEv: 0.997, toleranceEv: 0.01 }),
      },
    },
  ];
  const rows: Row[] = [];
  for (const c of cases) {
    await run({ ...c.opts, duration: 1 }); // warm-up
    const r = await run(c.opts);
    const expected304 = c.name.includes("304");
    const bad = expected304 ? r.requests.total - (r["3xx"] ?? 0) : r.non2xx;
    rows.push({ name: c.name, requestsPerSecond: r.requests.average, p50Ms: r.latency.p50, p99Ms: r.latency.p99, non2xx: bad, errors: r.errors });
  }
  return rows;
}

// Each size runs in a child process of its own: the product's modules read DATABASE_URL once per process.
if (args.only) {
  const size = Number(args.only);
  console.error(`bench: generating a registry of ${size} revisions…`);
  const p = await prepare(size);
  const written = await freeze(p.url, p.adminId);
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-bench-mail-"));
  const sink = await startSink({ port: 0, dir: mailboxDir });
  const server = await startAppServer({ databaseUrl: p.url, smtpPort: sink.port, mailboxDir, extraEnv: { BANDLEDGER_API_RATE_PER_MINUTE: "100000000", BANDLEDGER_CHECK_RATE_PER_MINUTE: "100000000" } });
  try {
    console.error(`bench: measuring at ${size} revisions (${CONNECTIONS} connections, ${DURATION} s per row)…`);
    const rows = await measure(server, { cookie: `__bandledger=${await sessionCookieValue(p.adminId)}`, token: p.token, family: p.family, sha256: written.sha256 });
    writeFileSync(args.out!, JSON.stringify({ rows, meta: { ...p.summary, releaseItems: written.itemCount, releaseSha256: written.sha256 } }));
  } finally {
    await server.stop();
    await sink.close();
    await p.drop();
  }
  process.exit(0);
}

const results: Record<number, Row[]> = {};
const meta: Record<number, unknown> = {};
const tmp = mkdtempSync(path.join(os.tmpdir(), "bl-bench-"));
for (const size of SIZES) {
  const out = path.join(tmp, `${size}.json`);
  execFileSync(process.execPath, [...process.execArgv, process.argv[1], "--only", String(size), "--out", out, "--duration", String(DURATION), "--connections", String(CONNECTIONS), "--set-size", String(SET_SIZE)], { stdio: ["ignore", "inherit", "inherit"] });
  const r = JSON.parse(readFileSync(out, "utf8")) as { rows: Row[]; meta: unknown };
  results[size] = r.rows;
  meta[size] = r.meta;
}

const small = results[SIZES[0]];
const large = results[SIZES[SIZES.length - 1]];
const floor = large[0].requestsPerSecond;
const fmt = (n: number, d = 0) => n.toFixed(d).padStart(8);
console.log(`\nBandledger HTTP benchmark — ${os.cpus().length} cores, ${os.cpus()[0]?.model ?? "unknown CPU"}, Node ${process.version}, ${CONNECTIONS} connections, ${DURATION} s per row`);
console.log(`${"row".padEnd(28)}${"req/s".padStart(8)}${"p50 ms".padStart(8)}${"p99 ms".padStart(8)}${"÷floor".padStart(8)}${"req/s@" + SIZES[0]}`.padEnd(70) + `${"growth".padStart(8)}${"bad".padStart(6)}`);
const table = large.map((r, i) => {
  const s = small[i];
  const growth = s.requestsPerSecond / r.requestsPerSecond;
  console.log(`${r.name.padEnd(28)}${fmt(r.requestsPerSecond)}${fmt(r.p50Ms, 1)}${fmt(r.p99Ms, 1)}${fmt(r.requestsPerSecond / floor, 2)}${fmt(s.requestsPerSecond)}`.padEnd(70) + `${fmt(growth, 2)}${String(r.non2xx + r.errors + s.non2xx + s.errors).padStart(6)}`);
  return { ...r, ratioToFloor: r.requestsPerSecond / floor, atSmall: s, growth };
});
mkdirSync("test-artifacts/bench", { recursive: true });
const out = { at: new Date().toISOString(), machine: { cores: os.cpus().length, cpu: os.cpus()[0]?.model, node: process.version, memoryGiB: Math.round(os.totalmem() / 2 ** 30) }, connections: CONNECTIONS, durationSeconds: DURATION, sizes: SIZES, meta, rows: table };
writeFileSync("test-artifacts/bench/http.json", JSON.stringify(out, null, 2));
console.log("\n(growth = throughput at the small registry ÷ throughput at the large one; written to test-artifacts/bench/http.json)");

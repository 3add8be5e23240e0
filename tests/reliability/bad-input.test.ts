import { and, asc, eq, isNotNull, ne } from "drizzle-orm";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { apiTokens, familyLeads, materialFamilies, materials, proposals, quantities, records, sessions, users } from "~/.server/db/schema";
import { loadProposalCatalogue } from "~/.server/workflow/catalogue";
import { payloadFromFormData, validateProposal } from "~/domain/proposal-schemas";
import { TEAM_DOMAIN } from "../../seed-data/team";
import { badInputs, CATEGORIES, PROPOSAL_BASE, type BadInput, type Category, type CorpusContext, type Who } from "../fixtures/bad-input/corpus";
import { startDemoServer, type DemoServer } from "../integration/api-fixture";
import { tableChecksums } from "../support/checksums";
import { rounds } from "../support/reliability";
import { HttpClient } from "../support/route-access";
import { sessionCookieValue } from "../support/session";

// Every case of tests/fixtures/bad-input/corpus.ts against the production build over the demo data: each must be
// refused with its 4xx and a message a person (or a script) can act on, no case may answer 5xx, and after the whole
// corpus the database holds what it held before.

const CONCURRENCY = 4;
let demo: DemoServer;
let ctx: CorpusContext;
let token: string;
const cookies: Partial<Record<Who, string>> = {};

type Answer = { status: number; type: string; text: string };

beforeAll(async () => {
  // The corpus sends ~80 API calls in a few seconds from one token; the limit itself is tested in api.test.ts.
  demo = await startDemoServer("badinput", { BANDLEDGER_API_RATE_PER_MINUTE: "100000" });
  const person = (name: string) => demo.userId(name);
  const mei = await person("mei.tanaka");
  const [draft] = await demo.t.db.select().from(proposals).where(and(eq(proposals.authorId, mei), eq(proposals.state, "draft")));
  const [submitted] = await demo.t.db.select().from(proposals).where(and(eq(proposals.authorId, mei), eq(proposals.state, "submitted")));
  const [family] = await demo.t.db.select({ id: materialFamilies.id }).from(materials).innerJoin(materialFamilies, eq(materialFamilies.id, materials.familyId)).where(eq(materials.id, submitted.materialId!));
  const ravi = await person("ravi.menon");
  // The review cases need a lead of the proposal's family who is not its author.
  expect(await demo.t.db.select().from(familyLeads).where(and(eq(familyLeads.familyId, family.id), eq(familyLeads.userId, ravi)))).toHaveLength(1);
  const priya = await person("priya.raman");
  const [priyaRow] = await demo.t.db.select({ version: users.version }).from(users).where(eq(users.id, priya));
  ctx = { draftId: draft.id, proposalId: submitted.id, proposalVersion: submitted.version, setSlug: "hemt-baseline", familyId: family.id, userId: priya, userVersion: priyaRow.version };

  // The proposal baseline is valid and names no existing record, so each case fails for the one thing it breaks.
  const form = new FormData();
  for (const [k, v] of Object.entries(PROPOSAL_BASE)) form.set(k, v);
  const base = validateProposal(payloadFromFormData(form), await loadProposalCatalogue(demo.t.db));
  expect(base.ok, JSON.stringify(base.ok ? null : base.errors)).toBe(true);
  if (base.ok) {
    const [q] = await demo.t.db.select({ id: quantities.id }).from(quantities).where(eq(quantities.key, base.proposal.quantity.key));
    const taken = await demo.t.db.select({ id: records.id }).from(records)
      .where(and(eq(records.materialId, base.proposal.material.id), eq(records.quantityId, q.id), eq(records.conditionKey, base.proposal.conditionKey!)));
    expect(taken).toEqual([]);
  }

  const cookieOf = async (name: string) => `__bandledger=${await sessionCookieValue(await person(name), demo.t.url)}`;
  cookies.reader = await cookieOf("priya.raman");
  cookies.contributor = await cookieOf("tomas.okafor");
  cookies.author = await cookieOf("mei.tanaka");
  cookies.lead = await cookieOf("ravi.menon");
  cookies.admin = await cookieOf("ines.carvalho");
  // A browser with a code waiting, for an address with no account (nothing is mailed); written before the snapshot.
  const pending = new HttpClient(demo.url);
  const asked = await pending.post("/sign-in", { email: `nobody.here@${TEAM_DOMAIN}` });
  expect([302, 303]).toContain(asked.status);
  expect(asked.headers.get("location")).toContain("/sign-in/code");
  cookies["pending-sign-in"] = pending.cookieHeader();

  token = await demo.token("priya.raman");
  // The token's first use stamps last_used_at; it happens here, before the snapshot.
  expect((await fetch(`${demo.url}/api/v1/account`, { headers: { authorization: `Bearer ${token}` } })).status).toBe(200);
});
afterAll(async () => demo?.close());

async function send(c: BadInput): Promise<Answer> {
  const headers: Record<string, string> = {};
  const cookie = cookies[c.who];
  if (cookie) headers.cookie = cookie;
  if (c.who === "token") headers.authorization = `Bearer ${token}`;
  if (c.authorization) headers.authorization = c.authorization;
  const method = c.method ?? (c.body ? "POST" : "GET");
  if (method !== "GET") headers.origin = demo.url;
  let body: BodyInit | undefined;
  const b = c.body;
  if (b && "form" in b) {
    body = new URLSearchParams(b.form).toString();
    headers["content-type"] = "application/x-www-form-urlencoded";
  } else if (b && "json" in b) {
    body = JSON.stringify(b.json);
    headers["content-type"] = "application/json";
  } else if (b && "raw" in b) {
    // Bytes, so fetch adds no content type of its own (text/plain for a string).
    body = Buffer.from(b.raw);
    if (b.type !== null) headers["content-type"] = b.type;
  } else if (b && "multipart" in b) {
    const fd = new FormData();
    for (const p of b.multipart) {
      if ("file" in p) fd.append(p.name, new Blob([Buffer.from(p.file)], { type: p.type ?? "application/octet-stream" }), p.filename);
      else fd.append(p.name, p.value);
    }
    body = fd;
  }
  const r = await fetch(demo.url + c.path, { method, headers, body, redirect: "manual" });
  return { status: r.status, type: r.headers.get("content-type") ?? "", text: await r.text() };
}

const ENTITIES: Record<string, string> = { amp: "&", lt: "<", gt: ">", quot: '"', apos: "'", nbsp: " " };
function decode(s: string): string {
  return s.replace(/&(#x[0-9a-f]+|#\d+|[a-z]+);/gi, (m, e: string) =>
    e[0] === "#" ? String.fromCodePoint(e[1] === "x" || e[1] === "X" ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10)) : ENTITIES[e] ?? m);
}

// What a person sees: the hydration data in <script> holds the action's data too, and must not count as shown.
function rendered(html: string): string {
  return html.replace(/<script\b[\s\S]*?<\/script>/gi, " ").replace(/<style\b[\s\S]*?<\/style>/gi, " ");
}
const textOf = (html: string) => decode(html.replace(/<[^>]+>/g, " ")).replace(/\s+/g, " ").trim();

function elementText(html: string, id: string): string | null {
  const m = new RegExp(`<([a-z0-9]+)\\b[^>]*\\sid="${id.replace(/[.*+?^${}()|[\]\\]/g, "\\$&")}"[^>]*>([\\s\\S]*?)</\\1>`, "i").exec(html);
  return m ? textOf(m[2]) : null;
}

const matches = (text: string, want: string | RegExp) => (typeof want === "string" ? text.includes(want) : want.test(text));

/** What is wrong with an answer, or nothing. */
function problemsOf(c: BadInput, a: Answer): string[] {
  const out: string[] = [];
  const e = c.expect;
  if (a.status >= 500) out.push(`answered ${a.status}`);
  if (a.status !== e.status) out.push(`status ${a.status}, expected ${e.status}`);
  if (c.path.startsWith("/api/")) {
    if (!a.type.startsWith("application/json")) out.push(`content type ${a.type}`);
    let body: { error?: { code?: string; message?: string; field?: string | null } } = {};
    try {
      body = JSON.parse(a.text);
    } catch {
      out.push(`not JSON: ${a.text.slice(0, 120)}`);
    }
    const err = body.error;
    if (!err || typeof err.message !== "string" || err.message.length < 10) out.push(`no error message: ${a.text.slice(0, 160)}`);
    else {
      if (e.code && err.code !== e.code) out.push(`code ${err.code}, expected ${e.code} (${err.message})`);
      if (e.apiField !== undefined && err.field !== e.apiField) out.push(`field ${err.field}, expected ${e.apiField} (${err.message})`);
      if (!matches(err.message, e.message)) out.push(`message “${err.message}” does not match ${e.message}`);
    }
    return out;
  }
  if (!a.type.startsWith("text/html")) out.push(`content type ${a.type}`);
  const html = rendered(a.text);
  if (e.field) {
    const at = elementText(html, e.field);
    if (at === null) out.push(`no #${e.field} on the page`);
    else if (!matches(at, e.message)) out.push(`#${e.field} says “${at.slice(0, 200)}”, expected ${e.message}`);
  } else if (!matches(textOf(html), e.message)) {
    const alert = /role="alert"[^>]*>([\s\S]*?)<\//.exec(html)?.[1];
    out.push(`the page does not show ${e.message}${alert ? ` (alert: “${textOf(alert).slice(0, 160)}”)` : ""}; ${textOf(html).slice(0, 200)}`);
  }
  return out;
}

async function pool<T, R>(items: T[], size: number, work: (item: T) => Promise<R>): Promise<R[]> {
  const results: R[] = new Array(items.length);
  let next = 0;
  await Promise.all(Array.from({ length: size }, async () => {
    while (next < items.length) {
      const i = next++;
      results[i] = await work(items[i]);
    }
  }));
  return results;
}

// The one row the corpus may change: the author's draft, which keeps whatever was typed, valid or not, by design
// (app/.server/workflow/form-action.ts saves before it checks): its payload, the material and quantity read from
// it and updated_at. Its state, version, record and everything else must stay.
async function snapshot() {
  const d = demo.t.db;
  const sums = await tableChecksums(demo.t.pool, demo.t.name);
  const others = await d.select().from(proposals).where(ne(proposals.id, ctx.draftId)).orderBy(asc(proposals.id));
  const [row] = await d.select().from(proposals).where(eq(proposals.id, ctx.draftId));
  const { payload: _typed, materialId: _m, quantityId: _q, updatedAt: _u, ...draft } = row;
  // api_tokens.last_used_at is stamped by reads (at most once a minute); every other column must stay.
  const tokens = (await d.select().from(apiTokens).orderBy(asc(apiTokens.id))).map(({ lastUsedAt: _used, ...t }) => t);
  // Signed-in sessions stay as they were but for last_seen_at (stamped at most once a minute); a refused request may
  // leave an anonymous row holding only its notice, which signs no one in.
  const signedIn = (await d.select().from(sessions).where(isNotNull(sessions.userId)).orderBy(asc(sessions.id))).map(({ lastSeenAt: _seen, ...x }) => x);
  return { sums, others, draft, tokens, signedIn };
}

// Tables whose checksum is replaced by a finer comparison above: proposals (the draft's payload), api_tokens
// (last_used_at) and sessions (last_seen_at, anonymous notices). Nothing else is allowed to move.
const COMPARED_BY_ROWS = ["proposals", "api_tokens", "sessions"];

describe("a corpus of bad input against the forms, the CSV upload and the API", () => {
  it("refuses every case with a 4xx and a message, never a 5xx, and changes nothing in the database", async () => {
    const corpus = badInputs(ctx);
    const counts = new Map<Category, number>(CATEGORIES.map((c) => [c, 0]));
    for (const c of corpus) counts.set(c.category, counts.get(c.category)! + 1);
    const targets = new Set(corpus.map((c) => c.target));
    console.log(
      `bad-input corpus: ${corpus.length} cases over ${targets.size} targets\n` +
        [...counts].map(([k, n]) => `  ${k.padEnd(24)} ${n}`).join("\n"),
    );
    expect(corpus.length).toBeGreaterThanOrEqual(150);
    for (const [category, n] of counts) expect(n, category).toBeGreaterThanOrEqual(8);

    const before = await snapshot();
    const started = Date.now();
    const failures: string[] = [];
    const serverErrors: string[] = [];
    for (let round = 0; round < rounds(1, 3); round++) {
      const answers = await pool(corpus, CONCURRENCY, send);
      corpus.forEach((c, i) => {
        const a = answers[i];
        if (a.status >= 500) serverErrors.push(`${c.target} · ${c.name}: ${a.status}`);
        const p = problemsOf(c, a);
        if (p.length) failures.push(`[${c.category}] ${c.target} · ${c.name}: ${p.join("; ")}`);
      });
    }
    console.log(`bad-input corpus: ${rounds(1, 3) * corpus.length} requests in ${((Date.now() - started) / 1000).toFixed(1)} s, ${failures.length} failed`);
    const after = await snapshot();
    expect(serverErrors, "no case may answer 5xx").toEqual([]);
    expect(failures).toEqual([]);

    const changed = Object.keys(before.sums).filter((t) => !COMPARED_BY_ROWS.includes(t.split(".").pop()!) && before.sums[t] !== after.sums[t]);
    expect(changed, "tables changed by refused input").toEqual([]);
    expect(after.others).toEqual(before.others);
    expect(after.draft).toEqual(before.draft);
    expect(after.tokens).toEqual(before.tokens);
    expect(after.signedIn).toEqual(before.signedIn);
  });
});

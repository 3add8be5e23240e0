import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startSink, type Sink } from "~/.server/mail/sink";
import { sha256Hex, verifyReleaseText } from "~/domain/release-format";
import { loadDemo } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { alertText, allAtOnce, answerOf, fulfilled, type Answer } from "../support/faults";
import { FULL, rounds } from "../support/reliability";
import { HttpClient } from "../support/route-access";

// Fifty conflicting requests at once against the production server, as signed-in form posts. The record is the
// demo's GaAs a(300 K); the values proposed are invented variations around 5.65325 Å of [V01] (Vurgaftman, Meyer,
// Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), from memory), which only serve to tell the proposals apart.
const AT_ONCE = 50;
const ROUNDS = rounds(1, 5);

const STALE = /^The record has changed since this proposal was based on it: its current value is now \S+ Å \(revision \d+\)\. Its author must carry it forward to the current value first\.$/;
const DECIDED = /^This proposal was already (approved|rejected) by (Ravi Menon|Hanna Lindqvist|Inês Carvalho) \(\d{4}-\d\d-\d\d \d\d:\d\d UTC\); a decided proposal is not decided again\.$/;
const CHANGED = "The proposal changed since you opened it (its author carried it forward or edited it); look at it again before you decide.";
const SET_CONFLICT = "The set changed since you opened it (someone edited or froze it). Reload the page, check the members and try again.";

let t: TestDatabase;
let sink: Sink;
let app: AppServer;
const as: Record<string, HttpClient> = {};
const ids: Record<string, number> = {};
let recordId = 0;
let serial = 0;

const LEADS = ["ravi", "hanna", "ines"] as const;
const AUTHORS = ["tomas", "mei"] as const;

async function q<T = Record<string, unknown>>(sql: string, params: unknown[] = []): Promise<T[]> {
  const [rows] = await t.pool.query(sql, params);
  return rows as T[];
}

async function proposalRow(id: number) {
  const [row] = await q<{ state: string; version: number; author_id: number; base_revision_id: number | null; result_revision_id: number | null; decided_by: number | null }>(
    "SELECT state, version, author_id, base_revision_id, result_revision_id, decided_by FROM proposals WHERE id = ?", [id]);
  return row;
}

/** Submits a revision of the record through the proposal form; answers the new proposal's id. */
async function propose(author: (typeof AUTHORS)[number]): Promise<number> {
  const n = ++serial;
  const r = await as[author].post(`/proposals/new?record=${recordId}&kind=revision`, {
    intent: "submit", kind: "revision", recordId: String(recordId), material: "GaAs", quantity: "lattice_a",
    value: `5.653${String(n % 100).padStart(2, "0")}`, unit: "Å", method: "compilation",
    "source.kind": "doi", "source.doi": "10.1063/1.1368156", "source.title": "Band parameters for III–V compound semiconductors and their alloys",
    locator: "GaAs parameter table", notes: `race proposal ${n}`,
  });
  const id = Number(/^\/proposals\/(\d+)$/.exec(r.headers.get("location") ?? "")?.[1]);
  if (r.status !== 302 || !id) throw new Error(`proposal not submitted: ${r.status} ${alertText(await r.text())}`);
  return id;
}

async function proposeMany(n: number): Promise<number[]> {
  return fulfilled(await allAtOnce(Array.from({ length: n }, (_, i) => () => propose(AUTHORS[i % 2]))));
}

function approve(lead: string, id: number, version: number): Promise<Answer> {
  return answerOf(as[lead].post(`/proposals/${id}`, { intent: "approve", version: String(version) }));
}

/** The record's revisions are 1…n without a gap, the newest is current, and each approved proposal's base is its parent. */
async function expectLinearChain(proposalIds: number[]) {
  const revs = await q<{ id: number; seq: number }>("SELECT id, seq FROM revisions WHERE record_id = ? ORDER BY seq", [recordId]);
  expect(revs.map((r) => r.seq)).toEqual(revs.map((_, i) => i + 1));
  const [rec] = await q<{ current_revision_id: number }>("SELECT current_revision_id FROM records WHERE id = ?", [recordId]);
  expect(rec.current_revision_id).toBe(revs.at(-1)!.id);
  const seqOf = new Map(revs.map((r) => [r.id, r.seq]));
  const approved = await q<{ id: number; base_revision_id: number; result_revision_id: number }>(
    `SELECT id, base_revision_id, result_revision_id FROM proposals WHERE state = 'approved' AND id IN (${proposalIds.map(() => "?").join(",")})`, proposalIds);
  for (const p of approved) expect(seqOf.get(p.result_revision_id), `proposal ${p.id}`).toBe(seqOf.get(p.base_revision_id)! + 1);
  // One winner per base revision: no two approvals were written on the same parent.
  expect(new Set(approved.map((p) => p.base_revision_id)).size).toBe(approved.length);
  return { revisions: revs.length, approved: approved.length };
}

async function revisionCount(): Promise<number> {
  const [{ n }] = await q<{ n: number }>("SELECT COUNT(*) AS n FROM revisions WHERE record_id = ?", [recordId]);
  return Number(n);
}

function tally(answers: Answer[]) {
  return answers.reduce<Record<number, number>>((m, a) => ({ ...m, [a.status]: (m[a.status] ?? 0) + 1 }), {});
}

beforeAll(async () => {
  t = await freshDatabase("races");
  await loadDemo(t.db);
  for (const u of await q<{ id: number; email: string }>("SELECT id, email FROM users")) ids[u.email.split(".")[0]] = u.id;
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-races-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { BANDLEDGER_DATA_DIR: mkdtempSync(path.join(os.tmpdir(), "bl-races-data-")) } });
  for (const p of [...LEADS, ...AUTHORS]) as[p] = await HttpClient.signedIn(app.url, ids[p]);
  const [r] = await q<{ id: number }>(
    "SELECT r.id FROM records r JOIN materials m ON m.id = r.material_id JOIN quantities qu ON qu.id = r.quantity_id WHERE m.`key` = 'GaAs' AND qu.`key` = 'lattice_a' AND r.condition_key = 'T=300|V=|x='");
  recordId = r.id;
  console.log(`races: ${AT_ONCE} requests at once, ${ROUNDS} round(s)${FULL ? " (full)" : ""}`);
});
afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await t?.drop();
});

describe(`${AT_ONCE} leads approving ${AT_ONCE} proposals on the same base revision at once`, () => {
  it("one approval wins, every other lead is told the record moved on, and no update is lost", async () => {
    for (let round = 1; round <= ROUNDS; round++) {
      const before = await revisionCount();
      const proposals = await proposeMany(AT_ONCE);
      const rows = await Promise.all(proposals.map(proposalRow));
      expect(new Set(rows.map((r) => r.base_revision_id)).size).toBe(1);
      const started = performance.now();
      const answers = fulfilled(await allAtOnce(proposals.map((id, i) => () => approve(LEADS[i % 3], id, rows[i].version))));
      const ms = Math.round(performance.now() - started);
      const winners = answers.filter((a) => a.status === 302);
      const losers = answers.filter((a) => a.status !== 302);
      console.log(`races: same base, round ${round}: ${winners.length} winner, ${losers.length} losers ${JSON.stringify(tally(losers))}, ${ms} ms for all ${AT_ONCE}`);
      expect(winners, alertText(losers[0]?.text ?? "") ?? "").toHaveLength(1);
      expect(winners[0].location).toMatch(/^\/proposals\/\d+$/);
      for (const l of losers) {
        expect(l.status).toBe(409);
        expect(alertText(l.text)).toMatch(STALE);
      }
      const states = await Promise.all(proposals.map(proposalRow));
      expect(states.filter((s) => s.state === "approved")).toHaveLength(1);
      expect(states.filter((s) => s.state === "submitted")).toHaveLength(AT_ONCE - 1);
      expect(await revisionCount()).toBe(before + 1);
      await expectLinearChain(proposals);
    }
  });
});

describe(`${AT_ONCE} decisions on one proposal at once, approvals and rejections mixed`, () => {
  it("records exactly one decision and tells every other lead who decided first", async () => {
    for (let round = 1; round <= ROUNDS; round++) {
      const before = await revisionCount();
      const [id] = await proposeMany(1);
      const { version } = await proposalRow(id);
      const answers = fulfilled(await allAtOnce(Array.from({ length: AT_ONCE }, (_, i) => () => {
        const lead = LEADS[i % 3];
        return i % 2 === 0
          ? approve(lead, id, version)
          : answerOf(as[lead].post(`/proposals/${id}`, { intent: "reject", version: String(version), reason: `Refused in race ${round}.${i}` }));
      })));
      const winners = answers.filter((a) => a.status === 302);
      const losers = answers.filter((a) => a.status !== 302);
      const row = await proposalRow(id);
      console.log(`races: one proposal, round ${round}: ${winners.length} decision (${row.state}), ${losers.length} losers ${JSON.stringify(tally(losers))}`);
      expect(winners).toHaveLength(1);
      expect(["approved", "rejected"]).toContain(row.state);
      expect(row.version).toBe(version + 1);
      for (const l of losers) {
        expect(l.status).toBe(409);
        const message = alertText(l.text)!;
        expect(message).toMatch(DECIDED);
        expect(message).toContain(`already ${row.state} by`);
      }
      const audits = await q<{ n: number }>("SELECT COUNT(*) AS n FROM audit_log WHERE target_type = 'proposal' AND target_id = ? AND action IN ('proposal.approve', 'proposal.reject')", [String(id)]);
      expect(Number(audits[0].n)).toBe(1);
      const decisionNotices = await q<{ n: number }>("SELECT COUNT(*) AS n FROM notices WHERE kind IN ('proposal.approved', 'proposal.rejected') AND link LIKE ?", [`%/proposals/${id}`]);
      expect(Number(decisionNotices[0].n)).toBe(1);
      expect(await revisionCount()).toBe(before + (row.state === "approved" ? 1 : 0));
      await expectLinearChain([id]);
    }
  });
});

describe("authors carrying stale proposals forward while leads approve them", () => {
  it("every carry-forward lands, approvals win at most once per base revision, the rest are told why, and the chain stays linear", async () => {
    for (let round = 1; round <= ROUNDS; round++) {
      // Forty-nine proposals on the current revision, made stale by a fiftieth that is approved first.
      const [first, ...stale] = await proposeMany(AT_ONCE);
      expect((await approve("ravi", first, (await proposalRow(first)).version)).status).toBe(302);
      const before = await revisionCount();
      const staleRows = await Promise.all(stale.map(proposalRow));
      const versions = staleRows.map((r) => r.version);
      // Each author carries forward (version v → v + 1) while a lead approves the carried version v + 1 that may not exist yet.
      type Move = Answer & { kind: "carry-forward" | "approve"; id: number };
      const answers = fulfilled(await allAtOnce(stale.flatMap((id, i): (() => Promise<Move>)[] => {
        const author = AUTHORS.find((a) => ids[a] === staleRows[i].author_id)!;
        return [
          async () => ({ kind: "carry-forward", id, ...(await answerOf(as[author].post(`/proposals/${id}`, { intent: "carry-forward", version: String(versions[i]) }))) }),
          async () => ({ kind: "approve", id, ...(await approve(LEADS[i % 3], id, versions[i] + 1)) }),
        ];
      })));
      const carried = answers.filter((a) => a.kind === "carry-forward");
      const approvals = answers.filter((a) => a.kind === "approve");
      const won = approvals.filter((a) => a.status === 302);
      const lost = approvals.filter((a) => a.status !== 302);
      const reasons = { stale: 0, changed: 0 };
      for (const l of lost) {
        expect(l.status, alertText(l.text) ?? "").toBe(409);
        const message = alertText(l.text)!;
        if (message === CHANGED) reasons.changed++;
        else {
          expect(message).toMatch(STALE);
          reasons.stale++;
        }
      }
      console.log(`races: carry forward + approve, round ${round}: ${carried.length} carried forward (${carried.filter((r) => r.status === 302).length} done), ${approvals.length} approvals: ${won.length} won, ${reasons.stale} told stale, ${reasons.changed} told the proposal changed`);
      // Carrying forward races only approvals of the version it creates, so every one of them must land.
      for (const r of carried) {
        expect(r.status, alertText(r.text) ?? "").toBe(302);
        expect(r.location).toBe(`/proposals/${r.id}`);
      }
      expect(await revisionCount()).toBe(before + won.length);
      const chain = await expectLinearChain([first, ...stale]);
      expect(chain.approved).toBe(1 + won.length);
      for (const [i, id] of stale.entries()) {
        const row = await proposalRow(id);
        expect(row.version).toBe(versions[i] + (won.some((w) => w.id === id) ? 2 : 1));
        expect(row.state).toBe(won.some((w) => w.id === id) ? "approved" : "submitted");
      }
    }
  });
});

describe(`${AT_ONCE} freezes of the same set at once`, () => {
  it("give unique, contiguous release numbers, one release per successful freeze, and tell the others why", async () => {
    const made = await as.ravi.post("/sets/new", { name: "Race freeze", purpose: "Frozen by many leads at once" });
    expect(made.status).toBe(302);
    const slug = made.headers.get("location")!.split("/").pop()!;
    expect((await as.ravi.post(`/sets/${slug}`, { intent: "add-filter", family: "arsenides" })).status).toBe(302);
    const [set] = await q<{ id: number }>("SELECT id FROM parameter_sets WHERE slug = ?", [slug]);
    for (let round = 1; round <= ROUNDS; round++) {
      const [{ version }] = await q<{ version: number }>("SELECT version FROM parameter_sets WHERE id = ?", [set.id]);
      const [{ last }] = await q<{ last: number }>("SELECT COALESCE(MAX(number), 0) AS last FROM releases WHERE set_id = ?", [set.id]);
      // Half saw the page at the same version; the others at the versions the next freezes will leave behind.
      const expected = Array.from({ length: AT_ONCE }, (_, i) => (i < AT_ONCE / 2 ? version : version + i - AT_ONCE / 2 + 1));
      const answers = fulfilled(await allAtOnce(expected.map((v, i) => async () => ({ v, ...(await answerOf(as[LEADS[i % 3]].post(`/sets/${slug}`, { intent: "freeze", confirm: "yes", expectedVersion: String(v) }))) }))));
      const won = answers.filter((a) => a.status === 302);
      const lost = answers.filter((a) => a.status !== 302);
      console.log(`races: freezes, round ${round}: ${won.length} releases frozen (${won.map((w) => w.location!.split("/").pop()).join(", ")}), ${lost.length} refused ${JSON.stringify(tally(lost))}`);
      expect(won.length).toBeGreaterThanOrEqual(1);
      for (const l of lost) {
        expect(l.status).toBe(409);
        expect(alertText(l.text)).toBe(SET_CONFLICT);
      }
      // A version is frozen at most once: two pages that saw the same set never both freeze.
      expect(new Set(won.map((w) => w.v)).size).toBe(won.length);
      const numbers = won.map((w) => Number(/\/releases\/(\d+)$/.exec(w.location ?? "")?.[1])).sort((a, b) => a - b);
      expect(numbers).toEqual(Array.from({ length: won.length }, (_, i) => last + i + 1));
      const rows = await q<{ number: number; sha256: string; canonical_json: string; csv: string; csv_sha256: string; item_count: number; items: number }>(
        "SELECT number, sha256, canonical_json, csv, csv_sha256, item_count, (SELECT COUNT(*) FROM release_items ri WHERE ri.release_id = r.id) AS items FROM releases r WHERE set_id = ? AND number > ? ORDER BY number", [set.id, last]);
      expect(rows.map((r) => r.number)).toEqual(numbers);
      for (const r of rows) {
        expect(await verifyReleaseText(r.canonical_json)).toMatchObject({ ok: true, sha256: r.sha256 });
        expect(await sha256Hex(r.csv)).toBe(r.csv_sha256);
        expect(Number(r.items)).toBe(r.item_count);
      }
      const [{ now }] = await q<{ now: number }>("SELECT version AS now FROM parameter_sets WHERE id = ?", [set.id]);
      expect(now).toBe(version + won.length);
    }
  });
});

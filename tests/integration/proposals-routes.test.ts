import { mkdtempSync, readFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { and, eq } from "drizzle-orm";
import Papa from "papaparse";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { materials, proposals, records, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { CSV_TEMPLATE_HEADER, isFormulaCell } from "~/domain/csv-proposals";
import { loadDemo } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { HttpClient } from "../support/route-access";

// The pages of proposals and review as a browser without JavaScript uses them: plain forms, redirects, cookies.
// Values: [V01] Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001), doi:10.1063/1.1368156 (from memory).
let t: TestDatabase;
let sink: Sink;
let app: AppServer;
const ids: Record<string, number> = {};
const as: Record<string, HttpClient> = {};
let gasbLattice = 0;

const V01_FORM = { "source.kind": "doi", "source.doi": "10.1063/1.1368156", "source.title": "Band parameters for III–V compound semiconductors and their alloys" };

async function multipart(client: HttpClient, pathname: string, fields: Record<string, string>, file: { name: string; bytes: Buffer }) {
  const form = new FormData();
  for (const [k, v] of Object.entries(fields)) form.set(k, v);
  form.set("file", new File([new Uint8Array(file.bytes)], file.name, { type: "text/csv" }));
  return fetch(new URL(pathname, client.base), { method: "POST", body: form, redirect: "manual", headers: { cookie: client.cookieHeader(), origin: client.base } });
}

beforeAll(async () => {
  t = await freshDatabase("proproutes");
  await loadDemo(t.db);
  for (const u of await t.db.select().from(users)) ids[u.email.split(".")[0]] = u.id;
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-routes-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { BANDLEDGER_DATA_DIR: mkdtempSync(path.join(os.tmpdir(), "bl-routes-data-")) } });
  for (const p of ["tomas", "ravi", "hanna"]) as[p] = await HttpClient.signedIn(app.url, ids[p]);
  const [r] = await t.db.select({ id: records.id }).from(records).innerJoin(materials, eq(materials.id, records.materialId)).where(and(eq(materials.key, "GaSb"), eq(records.conditionKey, "T=300|V=|x=")));
  gasbLattice = r.id;
});
afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await t?.drop();
});

describe("the proposal form without JavaScript", () => {
  it("is offered from a record page to contributors, and not to readers", async () => {
    const reader = await HttpClient.signedIn(app.url, ids.priya);
    const forContributor = await (await as.tomas.get(`/records/${gasbLattice}`)).text();
    expect(forContributor).toContain(`href="/proposals/new?record=${gasbLattice}&amp;kind=revision"`);
    expect(forContributor).toContain(`href="/proposals/new?record=${gasbLattice}&amp;kind=retirement"`);
    const forReader = await (await reader.get(`/records/${gasbLattice}`)).text();
    expect(forReader).not.toContain("/proposals/new?record=");
  });

  it("answers a refused submission with 400, the message at its field and everything typed still in the form", async () => {
    const r = await as.tomas.post(`/proposals/new?record=${gasbLattice}&kind=revision`, {
      intent: "submit", kind: "revision", recordId: String(gasbLattice), material: "GaSb", quantity: "lattice_a",
      value: "0.60959", unit: "nm", method: "compilation", ...V01_FORM, locator: "", notes: "typed without JavaScript",
    });
    expect(r.status).toBe(400);
    const html = await r.text();
    expect(html).toMatch(/id="f-locator-error"[^>]*>Say where in the source the value stands: page, table or figure\./);
    expect(html).toContain('value="0.60959"');
    expect(html).toContain("typed without JavaScript");
    const [draft] = await t.db.select().from(proposals).where(and(eq(proposals.authorId, ids.tomas), eq(proposals.recordId, gasbLattice)));
    expect(draft).toMatchObject({ state: "draft", payload: expect.objectContaining({ value: "0.60959", unit: "nm" }) });
    expect(html).toContain(`name="proposalId" value="${draft.id}"`);
    // The status line says the draft is stored, at the time the database holds.
    expect(html).not.toContain("Nothing saved yet");
    expect(html).toContain(`Not submitted: what you typed is saved as a draft (${draft.updatedAt.toISOString().slice(11, 19)} UTC).`);
  });

  it("keeps a form posted after the session ended and restores it into a draft after sign-in", async () => {
    const anonymous = new HttpClient(app.url);
    const r = await anonymous.post("/proposals/new", { intent: "save", kind: "new_record", material: "GaSb", quantity: "delta_so", value: "0.76", unit: "eV", notes: "kept across sign-in" });
    expect(r.status).toBe(302);
    expect(r.headers.get("location")).toBe("/sign-in?returnTo=%2Fproposals%2Frestore");
    const kept = anonymous.cookies.get("__bandledger_kept");
    expect(kept).toBeTruthy();
    const back = await HttpClient.signedIn(app.url, ids.tomas);
    back.cookies.set("__bandledger_kept", kept!);
    const restored = await back.get("/proposals/restore");
    expect(restored.status).toBe(302);
    const id = Number(/^\/proposals\/(\d+)\/edit$/.exec(restored.headers.get("location") ?? "")?.[1]);
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, id));
    expect(row).toMatchObject({ authorId: ids.tomas, state: "draft", payload: expect.objectContaining({ value: "0.76", notes: "kept across sign-in" }) });
    expect(back.cookies.has("__bandledger_kept")).toBe(false);
  });
});

describe("deciding through the proposal page", () => {
  it("guards by family, requires a reason to reject, and tells the second decider who came first", async () => {
    const submit = await as.tomas.post(`/proposals/new?record=${gasbLattice}&kind=revision`, {
      intent: "submit", kind: "revision", recordId: String(gasbLattice), material: "GaSb", quantity: "lattice_a",
      value: "6.0959", unit: "Å", method: "compilation", ...V01_FORM, locator: "GaSb parameter table", notes: "Restated with the page of [V01].",
    });
    expect(submit.status).toBe(302);
    const id = Number(/^\/proposals\/(\d+)$/.exec(submit.headers.get("location") ?? "")?.[1]);
    const [{ version }] = await t.db.select({ version: proposals.version }).from(proposals).where(eq(proposals.id, id));
    expect((await as.hanna.post(`/proposals/${id}`, { intent: "approve", version: String(version) })).status).toBe(403);
    const noReason = await as.ravi.post(`/proposals/${id}`, { intent: "reject", version: String(version), reason: "" });
    expect(noReason.status).toBe(400);
    expect(await noReason.text()).toContain("Say why the proposal is rejected; the author reads it.");
    const queue = await (await as.ravi.get("/review")).text();
    expect(queue).toContain(`/proposals/${id}`);
    const approve = await as.ravi.post(`/proposals/${id}`, { intent: "approve", version: String(version) });
    expect(approve.status).toBe(302);
    const again = await as.ravi.post(`/proposals/${id}`, { intent: "reject", version: String(version), reason: "Too late." });
    expect(again.status).toBe(409);
    expect(await again.text()).toContain("This proposal was already approved by Ravi Menon");
  });
});

describe("a stale proposal on its page", () => {
  it("may be rejected without being carried forward, is not approved, and the page says both", async () => {
    // [V01] GaAs a(300 K) = 5.65325 Å; two restatements of it compete for the same record.
    const [rec] = await t.db.select({ id: records.id }).from(records).innerJoin(materials, eq(materials.id, records.materialId)).where(and(eq(materials.key, "GaAs"), eq(records.conditionKey, "T=300|V=|x=")));
    const propose = async (value: string) => {
      const r = await as.tomas.post(`/proposals/new?record=${rec.id}&kind=revision`, {
        intent: "submit", kind: "revision", recordId: String(rec.id), material: "GaAs", quantity: "lattice_a",
        value, unit: "Å", method: "compilation", ...V01_FORM, locator: "GaAs parameter table", notes: "Restated from [V01].",
      });
      expect(r.status).toBe(302);
      return Number(/^\/proposals\/(\d+)$/.exec(r.headers.get("location") ?? "")?.[1]);
    };
    const versionOf = async (id: number) => String((await t.db.select({ version: proposals.version }).from(proposals).where(eq(proposals.id, id)))[0].version);
    const first = await propose("5.6533");
    const second = await propose("5.65330");
    expect((await as.hanna.post(`/proposals/${first}`, { intent: "approve", version: await versionOf(first) })).status).toBe(302);

    const page = (await (await as.ravi.get(`/proposals/${second}`)).text()).replace(/<!-- -->/g, "");
    expect(page).toContain("it cannot be approved until its author carries it forward to the current value. A lead may");
    expect(page).not.toMatch(/rebas/i);
    const own = (await (await as.tomas.get(`/proposals/${second}`)).text()).replace(/<!-- -->/g, "");
    expect(own).toContain('<input type="hidden" name="intent" value="carry-forward"/>');
    expect(own).toContain(">Carry forward to the current value</button>");
    expect(own).toContain(">stale: carry forward</span>");
    expect(own).toContain(">waiting for a decision</span>");
    expect(own).not.toMatch(/waiting for review/);
    expect(own).not.toMatch(/rebas/i);
    expect(page).toContain("still reject it as it stands, with a reason, without asking for it to be carried forward first.");
    expect(page).toMatch(/<button type="submit" class="btn-primary" disabled="">Approve<\/button>/);
    expect(page).toContain("Stale: approving waits until its author carries it forward. Rejecting is open now.");
    expect(page).toMatch(/<button type="submit" class="btn">Reject<\/button>/);

    const version = await versionOf(second);
    const approve = await as.ravi.post(`/proposals/${second}`, { intent: "approve", version });
    expect(approve.status).toBe(409);
    expect(await approve.text()).toContain("Its author must carry it forward to the current value first.");
    const reject = await as.ravi.post(`/proposals/${second}`, { intent: "reject", version, reason: "The record already holds this value to four decimals." });
    expect(reject.status).toBe(302);
    const [row] = await t.db.select().from(proposals).where(eq(proposals.id, second));
    expect(row).toMatchObject({ state: "rejected", decidedBy: ids.ravi, reason: "The record already holds this value to four decimals.", resultRevisionId: null });
  });
});

describe("CSV uploads", () => {
  it("offer a template that nothing in can run as a formula, and that passes the server's own check", async () => {
    const r = await as.tomas.get("/uploads/template.csv");
    expect(r.headers.get("content-type")).toBe("text/csv; charset=utf-8");
    const bytes = Buffer.from(await r.arrayBuffer());
    expect([...bytes.subarray(0, 3)]).toEqual([0xef, 0xbb, 0xbf]);
    const rows = Papa.parse<string[]>(bytes.subarray(3).toString("utf8"), { skipEmptyLines: true }).data;
    expect(rows[0]).toEqual(CSV_TEMPLATE_HEADER);
    expect(rows.flat().filter(isFormulaCell)).toEqual([]);
    expect(rows.flat()).toContain("-0.127");
    const check = await multipart(as.tomas, "/uploads", { intent: "check" }, { name: "template.csv", bytes });
    expect(check.status).toBe(200);
    const html = await check.text();
    expect(html).toContain("All 2 rows can be proposed");
    expect(html).toContain("Checked <!-- -->by the server");
  });

  it("show every broken row with its row and column, and turn a good file into a batch", async () => {
    const broken = await multipart(as.tomas, "/uploads", { intent: "submit" }, { name: "bad-units.csv", bytes: readFileSync("tests/fixtures/csv/bad-units.csv") });
    expect(broken.status).toBe(400);
    const html = await broken.text();
    expect(html).toContain("Nothing was proposed: fix the rows below and upload the file again.");
    expect(html).toMatch(/unit(<!-- -->)?: <\/span>“mV” is not accepted here; use eV, meV, µeV\./);
    const good = await multipart(as.tomas, "/uploads", { intent: "submit" }, { name: "good.csv", bytes: readFileSync("tests/fixtures/csv/good-bom-semicolon.csv") });
    expect(good.status).toBe(302);
    const batch = /^\/uploads\/(\d+)$/.exec(good.headers.get("location") ?? "")?.[1];
    expect(batch).toBeTruthy();
    const file = await as.ravi.get(`/uploads/${batch}/file`);
    expect(file.status).toBe(200);
    expect(file.headers.get("content-disposition")).toMatch(/^attachment;/);
    expect(Buffer.compare(Buffer.from(await file.arrayBuffer()), readFileSync("tests/fixtures/csv/good-bom-semicolon.csv"))).toBe(0);
  });
});

describe("the review queue", () => {
  it("lists the lead's families only and sorts by the column the address names", async () => {
    const order = async (query: string) => [...(await (await as.ravi.get(`/review${query}`)).text()).matchAll(/aria-label="Proposal (\d+):/g)].map((m) => Number(m[1]));
    const rows = await t.db
      .select({ id: proposals.id, submittedAt: proposals.submittedAt, material: materials.key, familyId: materials.familyId })
      .from(proposals)
      .innerJoin(materials, eq(materials.id, proposals.materialId))
      .where(eq(proposals.state, "submitted"));
    const byId = new Map(rows.map((r) => [r.id, r]));
    const byAge = await order("");
    expect(byAge.length).toBeGreaterThan(2);
    expect(byAge.map((id) => byId.get(id)!.material)).not.toContain("InP");
    const times = byAge.map((id) => byId.get(id)!.submittedAt!.getTime());
    expect(times).toEqual([...times].sort((a, b) => a - b));
    const down = (await order("?sort=material&dir=desc")).map((id) => byId.get(id)!.material.toLowerCase());
    expect(down).toEqual([...down].sort().reverse());
    const up = (await order("?sort=material&dir=asc")).map((id) => byId.get(id)!.material.toLowerCase());
    expect(up).toEqual([...up].sort());
  });
});

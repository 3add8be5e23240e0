import { drizzle } from "drizzle-orm/mysql2";
import { eq } from "drizzle-orm";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { parameterSets, proposals, revisions, users } from "~/.server/db/schema";
import { artifactPath, launchBrowser } from "../support/browser";
import { readMailbox } from "../support/mailbox";
import { HttpClient } from "../support/route-access";
import { signInAs } from "../support/session";

// Markup and script typed into everything people write that the app shows again: a BibTeX citation, a proposal's
// locator and notes, a comment, a lead's approval note and rejection reason, a CSV file's name and notes, a set's
// name, purpose and description, an invited person's name, a family's name and description. Each goes in through the
// app's own forms; every page that shows it is then opened in Chromium, where none of it may run or become markup.
//
// The values are real: [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), doi 10.1063/1.1368156,
// from memory: InAs a(300 K) = 6.0583 Å, da/dT = 2.74e-5 Å/K, so a(400 K) = 6.06104 Å and a(350 K) = 6.05967 Å (calc).
// The hostile citation uses the DOI test prefix 10.5555.

const appUrl = inject("appUrl");
const pool = createPool(inject("e2eDatabaseUrl"), 2);
const d = drizzle(pool, { schema, mode: "default" });

// Every payload sets window.__pwned (or opens a dialog) if it ever runs.
const SCRIPT = `<script>window.__pwned="script"</script>`;
const IMG = `<img src=x onerror="window.__pwned='img';alert('img')">`;
const SVG = `<svg/onload="window.__pwned='svg'">`;
const LINK = `<a href="javascript:window.__pwned='link'">open</a>`;
const JS_URL = `javascript:window.__pwned='url'`;

const BIBTEX = `@article{inert2026,
  title = {Hostile title ${SCRIPT} and ${IMG}},
  author = {Okafor, Tomás},
  journal = {Journal of ${LINK}},
  year = {2026},
  url = {${JS_URL}},
  doi = {10.5555/inert.2026.1}
}`;
const TITLE = `Hostile title ${SCRIPT} and ${IMG}`;
const LOCATOR = `Table 3 ${IMG}`;
const NOTES = `a(300 K) + 100 K · da/dT from [V01]. ${SCRIPT} ${SVG} ${LINK} ${JS_URL}`;
const COMMENT = `Checked the table. ${IMG} ${SCRIPT}`;
const APPROVAL = `Fine. ${SVG} ${LINK}`;
const REJECTION = `Duplicate of the 400 K value ${SCRIPT} ${IMG}`;
const CSV_NAME = `<svg onload=alert('csv')>.csv`;
const CSV_NOTES = `From the upload ${IMG}`;
const SET_NAME = `Inert ${SCRIPT}`;
const SET_PURPOSE = `Purpose ${IMG}`;
const SET_DESCRIPTION = `Description ${SVG}\n${LINK}\n${JS_URL}`;
const PERSON = `Hostile ${IMG}`;
const FAMILY = `Oxides ${SVG}`;
const FAMILY_DESCRIPTION = `ZnO and ${SCRIPT}`;

const ids: Record<string, number> = {};
let browser: BrowserContext;

async function userId(email: string) {
  const [u] = await d.select({ id: users.id }).from(users).where(eq(users.email, email));
  return u.id;
}

const idFrom = (r: Response, pattern: RegExp) => {
  const m = pattern.exec(r.headers.get("location") ?? "");
  if (!m) throw new Error(`${r.status} to ${r.headers.get("location")}`);
  return Number(m[1]);
};

function csvCell(s: string) {
  return /[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

beforeAll(async () => {
  for (const p of ["tomas.okafor", "ravi.menon", "ines.carvalho"]) ids[p] = await userId(`${p}@kestrel-devices.test`);
  const tomas = await HttpClient.signedIn(appUrl, ids["tomas.okafor"]);
  const ravi = await HttpClient.signedIn(appUrl, ids["ravi.menon"]);
  const ines = await HttpClient.signedIn(appUrl, ids["ines.carvalho"]);

  // A proposal with a BibTeX citation, a locator and notes, submitted through the proposal form.
  const submitted = await tomas.post("/proposals/new", {
    intent: "submit", kind: "new_record", material: "InAs", quantity: "lattice_a", temperatureMode: "stated", temperatureK: "400",
    value: "6.06104", unit: "Å", method: "calculated", "source.kind": "bibtex", "source.bibtex": BIBTEX, locator: LOCATOR, notes: NOTES,
  });
  ids.proposal = idFrom(submitted, /^\/proposals\/(\d+)$/);
  expect((await tomas.post(`/proposals/${ids.proposal}`, { intent: "remark", body: COMMENT })).status).toBe(302);
  const [p] = await d.select().from(proposals).where(eq(proposals.id, ids.proposal));
  expect((await ravi.post(`/proposals/${ids.proposal}`, { intent: "approve", version: String(p.version), reason: APPROVAL })).status).toBe(302);
  const [approved] = await d.select().from(proposals).where(eq(proposals.id, ids.proposal));
  expect(approved.state).toBe("approved");
  ids.record = approved.recordId!;
  const [rev] = await d.select({ sourceId: revisions.sourceId }).from(revisions).where(eq(revisions.id, approved.resultRevisionId!));
  ids.source = rev.sourceId!;

  // A CSV upload under a hostile file name, with hostile notes; the lead rejects it with a hostile reason.
  const header = "material,quantity,temperature_k,valley,composition_x,value,unit,uncertainty,method,source,source_title,locator,notes";
  const row = ["InAs", "lattice_a", "350", "", "", "6.05967", "Å", "", "calculated", "10.1063/1.1368156", "Band parameters for III-V compound semiconductors and their alloys", "InAs parameter table", CSV_NOTES].map(csvCell).join(",");
  const fd = new FormData();
  fd.append("intent", "submit");
  fd.append("file", new Blob([`${header}\n${row}\n`], { type: "text/csv" }), CSV_NAME);
  const uploaded = await fetch(`${appUrl}/uploads`, { method: "POST", body: fd, redirect: "manual", headers: { cookie: tomas.cookieHeader(), origin: appUrl } });
  ids.batch = idFrom(uploaded, /^\/uploads\/(\d+)$/);
  const [fromCsv] = await d.select().from(proposals).where(eq(proposals.batchId, ids.batch));
  ids.csvProposal = fromCsv.id;
  expect((await ravi.post(`/proposals/${fromCsv.id}`, { intent: "reject", version: String(fromCsv.version), reason: REJECTION })).status).toBe(302);

  // A set with hostile name, purpose and description, the new record in it, frozen into release 1.
  const created = await tomas.post("/sets/new", { name: SET_NAME, slug: "inert-html-check", purpose: SET_PURPOSE, description: SET_DESCRIPTION });
  expect(created.headers.get("location")).toBe("/sets/inert-html-check");
  expect((await tomas.post("/sets/inert-html-check", { intent: "add-record", recordId: String(ids.record) })).status).toBe(302);
  expect((await tomas.post("/sets/inert-html-check", { intent: "notices-on" })).status).toBe(302);
  const [set] = await d.select().from(parameterSets).where(eq(parameterSets.slug, "inert-html-check"));
  const frozen = await ravi.post("/sets/inert-html-check", { intent: "freeze", confirm: "yes", expectedVersion: String(set.version) });
  expect(frozen.headers.get("location")).toBe("/sets/inert-html-check/releases/1");

  // An invited person and a family, through the admin forms.
  expect((await ines.post("/admin/users", { intent: "invite", email: "inert.html@kestrel-devices.test", name: PERSON, role: "reader" })).status).toBe(302);
  expect((await ines.post("/admin/families", { intent: "create", key: "inert-html", name: FAMILY, description: FAMILY_DESCRIPTION })).status).toBe(302);

  browser = await launchBrowser();
  // Report every CSP violation into the page, from before its first script.
  await browser.addInitScript(() => {
    const w = window as unknown as { __csp: string[] };
    w.__csp = [];
    document.addEventListener("securitypolicyviolation", (e) => w.__csp.push(`${e.violatedDirective} ${e.blockedURI} ${e.sample} at ${e.sourceFile}:${e.lineNumber}:${e.columnNumber}`));
  });
  await signInAs(browser, appUrl, ids["ines.carvalho"]);
}, 120_000);
afterAll(async () => {
  await browser?.close();
  await pool.end();
});

type Seen = { pwned: unknown; csp: string[]; dialogs: string[]; console: string[]; injected: string[]; text: string };

async function visit(path: string): Promise<Seen & { page: Page }> {
  const page = await browser.newPage();
  const dialogs: string[] = [];
  const consoleMessages: string[] = [];
  page.on("dialog", (dialog) => {
    dialogs.push(dialog.message());
    void dialog.dismiss();
  });
  page.on("console", (m) => {
    if (/Content Security Policy|Refused to/i.test(m.text())) consoleMessages.push(m.text());
  });
  const response = await page.goto(appUrl + path);
  expect(response?.status(), path).toBe(200);
  // Hydrated: React rendered the same data again on the client, and any onerror of a broken image had its chance.
  await page.waitForFunction(() => Boolean((window as unknown as { __reactRouterRouteModules?: unknown }).__reactRouterRouteModules));
  await page.waitForLoadState("networkidle");
  const seen = await page.evaluate(() => {
    const w = window as unknown as { __pwned?: unknown; __csp: string[] };
    const injected = [
      ...document.querySelectorAll('img[src="x"], svg[onload], [onerror], [onload], a[href^="javascript:" i], iframe:not([sandbox])'),
      ...[...document.scripts].filter((s) => !s.nonce && !s.src),
    ].map((el) => el.outerHTML.slice(0, 120));
    // What the page shows as text, and what its fields hold (a rename field shows the name as its value).
    const values = [...document.querySelectorAll<HTMLInputElement | HTMLTextAreaElement>("input, textarea")].map((f) => f.value);
    // Text nodes as written (innerText would follow CSS capitals); the hydration data in <script> does not count.
    const shown = document.body.cloneNode(true) as HTMLElement;
    for (const el of shown.querySelectorAll("script, style, template")) el.remove();
    return { pwned: w.__pwned, csp: w.__csp, injected, text: [shown.textContent ?? "", ...values].join(" ").replace(/\s+/g, " ") };
  });
  return { ...seen, dialogs, console: consoleMessages, page };
}

const norm = (s: string) => s.replace(/\s+/g, " ");

// The pages that show what was written, with the text each must show literally.
const PAGES: [string, () => string, string[]][] = [
  ["the proposal", () => `/proposals/${ids.proposal}`, [TITLE, LOCATOR, NOTES, COMMENT, APPROVAL]],
  ["the record and its history", () => `/records/${ids.record}`, [LOCATOR, NOTES]],
  ["the source", () => `/sources/${ids.source}`, [TITLE]],
  ["the list of sources", () => "/sources", [TITLE]],
  ["the material page", () => "/materials/InAs", []],
  ["the registry", () => "/registry?material=InAs&quantity=lattice_a", []],
  ["the rejected CSV proposal", () => `/proposals/${ids.csvProposal}`, [CSV_NOTES, REJECTION]],
  ["the upload", () => `/uploads/${ids.batch}`, [CSV_NAME]],
  ["the review queue", () => "/review", []],
  ["the proposals list", () => "/proposals", []],
  ["the sets", () => "/sets", [SET_NAME, SET_PURPOSE]],
  ["the set", () => "/sets/inert-html-check", [SET_NAME, SET_PURPOSE, SET_DESCRIPTION]],
  ["the release", () => "/sets/inert-html-check/releases/1", [SET_NAME]],
  ["the comparison", () => "/sets/inert-html-check/compare?from=1&to=current", [SET_NAME]],
  ["the people", () => "/admin/users", [PERSON]],
  ["the families", () => "/admin/families", [FAMILY, FAMILY_DESCRIPTION]],
  ["the audit log", () => "/admin/audit", []],
  ["the local mailbox", () => "/dev/mailbox", []],
];

describe("user-written markup stays text in Chromium", () => {
  for (const [name, path, literal] of PAGES) {
    it(`on ${name}: nothing runs, no markup is made of it, and it reads as typed`, async () => {
      const seen = await visit(path());
      await seen.page.screenshot({ path: artifactPath(`inert-${name.replace(/\W+/g, "-")}.png`), fullPage: true });
      expect(seen.pwned, "window.__pwned was set").toBeUndefined();
      expect(seen.dialogs, "a dialog opened").toEqual([]);
      expect(seen.injected, "elements made of the payloads").toEqual([]);
      expect(seen.csp, "CSP violations: something tried to run").toEqual([]);
      expect(seen.console).toEqual([]);
      for (const text of literal) expect(seen.text, `shows ${text} literally`).toContain(norm(text));
      await seen.page.close();
    });
  }

  it("on every mail the events sent: the HTML part holds the payloads escaped, and its viewer runs nothing", async () => {
    const mails = (await readMailbox(inject("mailboxDir"))).filter((m) => m.text.includes("__pwned") || m.subject.includes("__pwned"));
    expect(mails.length, "mails that quote what was written").toBeGreaterThan(0);
    for (const m of mails) {
      expect(m.html, m.subject).not.toMatch(/<(script|img|svg|a)\b[^>]*(__pwned|javascript:)/i);
      expect(m.html, m.subject).not.toMatch(/<script>window\.__pwned/);
    }
    const seen = await visit(`/dev/mailbox/${mails[mails.length - 1].file}`);
    expect(seen.pwned).toBeUndefined();
    expect(seen.dialogs).toEqual([]);
    expect(seen.injected).toEqual([]);
    expect(seen.csp).toEqual([]);
    await seen.page.close();
  });
});

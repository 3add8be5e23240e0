import { drizzle } from "drizzle-orm/mysql2";
import { and, eq } from "drizzle-orm";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { materials, proposals, quantities, records, revisions, sources, users } from "~/.server/db/schema";
import { createRecordWithRevision } from "~/.server/registry/records";
import { artifactPath, launchBrowser, expectVisible } from "../support/browser";
import { readLastMail } from "../support/mailbox";
import { signInAs } from "../support/session";

// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), doi:10.1063/1.1368156 (values from memory);
// [Var67] Varshni, Physica 34, 149 (1967). AlAs Eg(Γ, 300 K) = 3.099 − 0.885e-3·300²/(300 + 530) = 3.003036 eV (calc):
// the record starts at four digits (3.003 eV) and the proposal states six (3.00304 eV).
const pool = createPool(inject("e2eDatabaseUrl"), 2);
const d = drizzle(pool, { schema, mode: "default" });
const appUrl = inject("appUrl");
const ids: Record<string, number> = {};
let recordId = 0;
let contributor: BrowserContext;
let lead: BrowserContext;

async function userId(email: string) {
  const [u] = await d.select({ id: users.id }).from(users).where(eq(users.email, email));
  return u.id;
}

async function shoot(page: Page, name: string) {
  await page.screenshot({ path: artifactPath(name), fullPage: true });
}

beforeAll(async () => {
  ids.tomas = await userId("tomas.okafor@kestrel-devices.test");
  ids.ravi = await userId("ravi.menon@kestrel-devices.test");
  ids.mei = await userId("mei.tanaka@kestrel-devices.test");
  const [alas] = await d.select({ id: materials.id }).from(materials).where(eq(materials.key, "AlAs"));
  const [eg] = await d.select({ id: quantities.id }).from(quantities).where(eq(quantities.key, "eg"));
  const [v01] = await d.select({ id: sources.id }).from(sources).where(eq(sources.doi, "10.1063/1.1368156"));
  const existing = await d.select({ id: records.id }).from(records).where(and(eq(records.materialId, alas.id), eq(records.quantityId, eg.id), eq(records.conditionKey, "T=300|V=G|x=")));
  recordId = existing[0]?.id ?? (await d.transaction((tx) => createRecordWithRevision(tx, {
    materialId: alas.id, quantityId: eg.id, conditions: { temperatureK: "300", valley: "G", composition: null },
    revision: { value: "3.003", unit: "eV", method: "calculated", sourceId: v01.id, locator: "AlAs parameter table", notes: "Varshni at 300 K, four digits." },
    proposedBy: ids.mei, approvedBy: ids.ravi,
  }))).recordId;
  contributor = await launchBrowser();
  lead = await launchBrowser();
  await signInAs(contributor, appUrl, ids.tomas);
  await signInAs(lead, appUrl, ids.ravi);
});
afterAll(async () => {
  await contributor?.close();
  await lead?.close();
  await pool.end();
});

describe("a change from proposal to the registry, in Chromium", () => {
  it("is proposed with a citation, noticed to the lead, approved from the link, and is live with its history", async () => {
    const page = await contributor.newPage();
    await page.goto(`${appUrl}/proposals/new?record=${recordId}&kind=revision`);
    await expectVisible(page.getByRole("heading", { name: "Propose a new value" }));
    await page.waitForFunction(() => Boolean((window as unknown as { __reactRouterRouteModules?: unknown }).__reactRouterRouteModules));
    await page.getByLabel("Value", { exact: true }).fill("3.00304");
    await page.getByLabel("Method").selectOption("calculated");
    await page.getByRole("textbox", { name: "DOI" }).fill("10.1063/1.1368156");
    await page.getByLabel("Title").fill("Band parameters for III–V compound semiconductors and their alloys");
    await page.getByRole("textbox", { name: "Notes" }).fill("Varshni with the [V01] parameters at 300 K, to six digits.");
    await expectVisible(page.getByText("Kept as 3.00304 eV, 6 significant digits."));

    // A refused submission keeps what was typed and says which field is wrong.
    await page.getByRole("button", { name: "Submit for a decision" }).click();
    const locatorError = page.locator("#f-locator-error");
    await locatorError.waitFor();
    expect(await locatorError.textContent()).toMatch(/page, table or figure/);
    expect(await page.getByLabel("Value", { exact: true }).inputValue()).toBe("3.00304");
    await shoot(page, "proposal-form-error.png");
    const draftId = Number(await page.locator('input[name="proposalId"]').getAttribute("value"));
    const [draft] = await d.select().from(proposals).where(eq(proposals.id, draftId));
    expect(draft).toMatchObject({ authorId: ids.tomas, recordId, state: "draft" });
    expect(draft.payload).toMatchObject({ value: "3.00304", source: { doi: "10.1063/1.1368156" } });

    await page.getByLabel("Where in the source").fill("AlAs parameter table: Eg(0) = 3.099 eV, α = 0.885 meV/K, β = 530 K");
    const before = Date.now();
    await page.getByRole("button", { name: "Submit for a decision" }).click();
    await page.waitForURL(new RegExp(`/proposals/${draft.id}$`));
    await expectVisible(page.getByText("Submitted for a decision"));
    await shoot(page, "proposal-submitted.png");

    const mail = await readLastMail(inject("mailboxDir"), "ravi.menon@kestrel-devices.test", { after: before });
    expect(mail.subject).toBe("AlAs · Band gap (Γ, 300 K): a proposal waits for your decision");
    expect(mail.text).toContain("3.003 eV → 3.00304 eV");
    const link = /https?:\/\/\S+\/proposals\/\d+/.exec(mail.text)?.[0];
    expect(link).toBe(`${appUrl}/proposals/${draft.id}`);

    const review = await lead.newPage();
    await review.goto(`${appUrl}/review`);
    await expectVisible(review.getByTestId("review-queue").getByText("3.00304 eV"));
    await shoot(review, "review-queue.png");
    await review.goto(link!);
    expect(await review.getByTestId("current-value").textContent()).toContain("3.003");
    expect(await review.getByTestId("proposed-value").textContent()).toContain("3.00304");
    await expectVisible(review.locator('[data-slot="consistency-checks"]'));
    await shoot(review, "proposal-review.png");
    const decided = Date.now();
    await review.getByRole("button", { name: "Approve" }).click();
    await review.getByText(/^Approved: record \d+ now holds the new value/).waitFor();
    await shoot(review, "proposal-approved.png");

    expect(await d.select({ id: proposals.id }).from(proposals).where(and(eq(proposals.authorId, ids.tomas), eq(proposals.recordId, recordId)))).toHaveLength(1);
    const back = await readLastMail(inject("mailboxDir"), "tomas.okafor@kestrel-devices.test", { after: decided });
    expect(back.subject).toBe("AlAs · Band gap (Γ, 300 K): Ravi Menon approved your proposal");

    await review.goto(`${appUrl}/records/${recordId}`);
    const body = await review.locator("main").innerText();
    expect(body).toContain("3.00304");
    expect(body).toContain("3.003");
    await shoot(review, "record-after-approval.png");
    const history = await d.select({ value: revisions.value }).from(revisions).where(eq(revisions.recordId, recordId));
    expect(history.map((h) => h.value)).toEqual(["3.003", "3.00304"]);
    const [rec] = await d.select({ current: records.currentRevisionId }).from(records).where(eq(records.id, recordId));
    const [current] = await d.select({ value: revisions.value }).from(revisions).where(eq(revisions.id, rec.current!));
    expect(current.value).toBe("3.00304");
    await page.goto(`${appUrl}/proposals`);
    expect(await page.locator("main").innerText()).toContain("AlAs · Band gap (Γ, 300 K)");
    await shoot(page, "proposals-list.png");
  });

  it("is carried forward when the record moved on: the badge, the button and the message say so in our words", async () => {
    // [V01] GaAs a(300 K) = 5.65325 Å; two restatements of it compete for the same record.
    const [gaas] = await d.select({ id: materials.id }).from(materials).where(eq(materials.key, "GaAs"));
    const [rec] = await d.select({ id: records.id }).from(records).where(and(eq(records.materialId, gaas.id), eq(records.conditionKey, "T=300|V=|x=")));
    const propose = async (value: string) => {
      const r = await contributor.request.post(`${appUrl}/proposals/new?record=${rec.id}&kind=revision`, {
        form: {
          intent: "submit", kind: "revision", recordId: String(rec.id), material: "GaAs", quantity: "lattice_a", value, unit: "Å", method: "compilation",
          "source.kind": "doi", "source.doi": "10.1063/1.1368156", "source.title": "Band parameters for III–V compound semiconductors and their alloys",
          locator: "GaAs parameter table", notes: "Restated from [V01].",
        },
        maxRedirects: 0,
      });
      expect(r.status()).toBe(302);
      return Number(/\/proposals\/(\d+)$/.exec(r.headers().location ?? "")?.[1]);
    };
    const first = await propose("5.653250");
    const second = await propose("5.6532500");
    const [{ version }] = await d.select({ version: proposals.version }).from(proposals).where(eq(proposals.id, first));
    const lead2 = await launchBrowser();
    await signInAs(lead2, appUrl, await userId("hanna.lindqvist@kestrel-devices.test"));
    expect((await lead2.request.post(`${appUrl}/proposals/${first}`, { form: { intent: "approve", version: String(version) }, maxRedirects: 0 })).status()).toBe(302);
    await lead2.close();

    const page = await contributor.newPage();
    await page.goto(`${appUrl}/proposals/${second}`);
    await expectVisible(page.getByText("stale: carry forward", { exact: true }));
    await page.getByRole("button", { name: "Carry forward to the current value" }).click();
    await page.getByText(/^Carried forward onto revision \d+: check that your value still holds against it\.$/).waitFor();
    await shoot(page, "proposal-carried-forward.png");
    expect(await page.locator("main").innerText()).not.toMatch(/rebas/i);
    await page.getByRole("button", { name: "Withdraw" }).click();
    await page.close();
  });

  it("names the lead's page Decisions in the menu, and nothing on it asks for a review", async () => {
    const page = await lead.newPage();
    await page.goto(`${appUrl}/proposals`);
    await page.getByRole("navigation", { name: "Primary", exact: true }).getByRole("link", { name: "Decisions", exact: true }).click();
    await page.waitForURL(/\/review$/);
    await page.getByRole("heading", { name: "Proposals waiting for a decision" }).waitFor();
    expect(await page.title()).toBe("Decisions to make · Bandledger");
    expect(await page.locator("main").innerText()).not.toMatch(/review queue|for review|your review|reviewer/i);
    await page.close();
  });

  it("keeps a form posted after the session ended, and puts it back after sign-in", async () => {
    const page = await contributor.newPage();
    await page.goto(`${appUrl}/proposals/new`);
    await page.waitForFunction(() => Boolean((window as unknown as { __reactRouterRouteModules?: unknown }).__reactRouterRouteModules));
    await page.getByLabel("Material").selectOption("GaSb");
    await page.getByLabel("Quantity").selectOption("lattice_a");
    await page.getByLabel("Temperature (K)").fill("300");
    await page.getByLabel("Value", { exact: true }).fill("6.0959");
    await page.getByRole("textbox", { name: "Notes" }).fill("typed before the session ended");
    await contributor.clearCookies();
    await page.getByRole("button", { name: "Save draft" }).click();
    await page.waitForURL(/\/sign-in\?returnTo=%2Fproposals%2Frestore/);
    await signInAs(contributor, appUrl, ids.tomas);
    await page.goto(`${appUrl}/proposals/restore`);
    await page.waitForURL(/\/proposals\/\d+\/edit$/);
    await expectVisible(page.getByText("what you had typed is back in the draft"));
    expect(await page.getByLabel("Value", { exact: true }).inputValue()).toBe("6.0959");
    expect(await page.getByRole("textbox", { name: "Notes" }).inputValue()).toBe("typed before the session ended");
    await shoot(page, "proposal-restored.png");
  });

  it("checks a CSV in the browser with a progress bar and lists every row's problems", async () => {
    const page = await contributor.newPage();
    await page.goto(`${appUrl}/uploads`);
    await page.waitForFunction(() => Boolean((window as unknown as { __reactRouterRouteModules?: unknown }).__reactRouterRouteModules));
    const header = "material,quantity,temperature_k,valley,value,unit,method,source,source_title,locator";
    const rows = Array.from({ length: 1500 }, (_, i) => `GaAs,lattice_a,${i + 1},,5.65325,Å,compilation,10.1063/1.1368156,Band parameters,GaAs table`);
    rows[700] = "GaAs,lattice_a,701,,5.65325,furlong,compilation,10.1063/1.1368156,Band parameters,GaAs table";
    await page.getByTestId("csv-file").setInputFiles({ name: "lattice.csv", mimeType: "text/csv", buffer: Buffer.from([header, ...rows].join("\n")) });
    await page.getByTestId("csv-progress").waitFor();
    await shoot(page, "csv-progress.png");
    await page.getByTestId("csv-preview").waitFor();
    const text = await page.getByTestId("csv-preview").innerText();
    expect(text).toContain("“furlong” is not accepted here; use Å, nm, pm.");
    await expectVisible(page.getByText("1 problem to fix; nothing is proposed until every row is right"));
    expect(await page.getByRole("button", { name: "Submit every row as a proposal" }).isDisabled()).toBe(true);
    await shoot(page, "csv-preview.png");
  });
});

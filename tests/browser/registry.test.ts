import mysql from "mysql2/promise";
import type { BrowserContext, Locator, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { artifactPath, launchBrowser, expectVisible } from "../support/browser";
import { signInAs } from "../support/session";

// The demo registry (seed-data/registry.ts): GaAs Eg(Γ, 300 K) = 1.4225 eV from the Varshni parameters of
// [V01] (from memory), superseding the handbook value 1.424 eV of [SzeNg] (from memory).

let browser: BrowserContext;
let readerId: number;
const appUrl = () => inject("appUrl");

beforeAll(async () => {
  const connection = await mysql.createConnection({ uri: inject("e2eDatabaseUrl") });
  const [rows] = await connection.query("SELECT id FROM users WHERE email = 'priya.raman@kestrel-devices.test'");
  readerId = (rows as { id: number }[])[0].id;
  await connection.end();
  browser = await launchBrowser();
  await signInAs(browser, appUrl(), readerId);
});
afterAll(async () => browser?.close());

async function rowTexts(page: Page): Promise<string[]> {
  return page.locator("table tbody tr").allInnerTexts();
}

// The text of a select's chosen option, as a person sees it.
const picked = (select: Locator) => select.evaluate((s) => (s as HTMLSelectElement).selectedOptions[0]?.textContent ?? "");
const isFocused = (target: Locator) => target.evaluate((el) => el === document.activeElement);

// A field marked invalid whose described-by message says what is wrong.
async function expectFieldError(field: Locator, message: RegExp) {
  await expect(field.getAttribute("aria-invalid")).resolves.toBe("true");
  const id = await field.getAttribute("aria-describedby");
  await expect(field.page().locator(`[id="${id}"]`).innerText()).resolves.toMatch(message);
}

describe("the registry in Chromium, as a reader", () => {
  it("filters to the GaAs band gaps and sorts them by value, all in the address", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl()}/registry`);
    const search = page.getByRole("search", { name: "Filter the registry" });
    await search.getByLabel("Family").selectOption("arsenides");
    await search.getByLabel("Material").selectOption("GaAs");
    await search.getByLabel("Quantity").selectOption("eg");
    await search.getByRole("button", { name: "Apply" }).click();
    await page.waitForURL(/material=GaAs/);
    await expect.poll(() => rowTexts(page)).toSatisfy((rows: string[]) => rows.length > 0 && rows.every((r) => r.startsWith("GaAs")));
    const url = new URL(page.url());
    expect(Object.fromEntries(url.searchParams)).toMatchObject({ family: "arsenides", material: "GaAs", quantity: "eg" });
    const rows = await rowTexts(page);
    expect(rows.length).toBeGreaterThan(3);
    expect(rows.every((r) => r.startsWith("GaAs"))).toBe(true);
    const gamma300 = rows.find((r) => r.includes("300 K") && r.includes("Γ"));
    expect(gamma300).toMatch(/1\.4225\s+eV/);
    expect(gamma300).toMatch(/Vurgaftman et al\. 2001/);
    await page.screenshot({ path: artifactPath("registry-filtered.png"), fullPage: true });

    await page.getByRole("link", { name: /^Sort by value/ }).click();
    await page.waitForURL(/sort=value/);
    await page.getByRole("link", { name: /^Sort by value, now ascending/ }).waitFor();
    const values = (await page.locator("table tbody tr td:nth-child(3)").allInnerTexts()).map((t) => t.split(/\s/)[0]);
    expect(values.length).toBe(rows.length);
    for (let i = 1; i < values.length; i++) expect(Number(values[i])).toBeGreaterThanOrEqual(Number(values[i - 1]));
    expect(await page.locator("th[aria-sort]").getAttribute("aria-sort")).toBe("ascending");

    const shared = await browser.newPage();
    await shared.goto(page.url());
    expect(await rowTexts(shared)).toEqual(await rowTexts(page));
    await shared.close();
    await page.close();
  });

  it("searches by source with the keyboard alone and shows an empty state when nothing matches", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl()}/registry`);
    await page.getByLabel("Text").focus();
    await page.keyboard.type("Sze");
    await page.keyboard.press("Enter");
    await page.waitForURL(/q=Sze/);
    await expect.poll(() => rowTexts(page)).toSatisfy((rows: string[]) => rows.length > 0 && rows.every((r) => r.includes("Sze & Ng 2007")));
    await page.goto(`${appUrl()}/registry?q=no-such-thing-anywhere`);
    await expectVisible(page.getByRole("heading", { name: "No record matches these filters" }));
    await page.close();
  });

  it("opens GaAs, shows the caution and compares the handbook revision with the current one side by side", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl()}/registry?material=GaAs&quantity=eg`);
    await page.locator("table tbody tr", { hasText: "300 K" }).filter({ hasText: "Γ" }).getByRole("link", { name: "GaAs" }).click();
    await page.waitForURL(/\/materials\/GaAs/);
    await page.getByRole("heading", { level: 1, name: /Gallium arsenide/ }).waitFor();
    await expect(page.getByRole("note").innerText()).resolves.toMatch(/confirm them against the team's own measurements/);

    await page.screenshot({ path: artifactPath("material-top.png") });
    const item = page.locator("li[data-record]", { hasText: "1.4225" }).filter({ hasText: "300 K" });
    await expect(item.count()).resolves.toBe(1);
    await item.locator("summary").click();
    const first = item.getByLabel("Show revision", { exact: true });
    const second = item.getByLabel("beside revision", { exact: true });
    await expect(picked(first)).resolves.toBe("2 · superseded");
    await expect(picked(second)).resolves.toBe("3 · current");
    // Keyboard only: the options run newest first, so one step down from revision 2 is revision 1.
    await first.focus();
    await page.keyboard.press("ArrowDown");
    await expect(picked(first)).resolves.toBe("1 · superseded");
    await page.keyboard.press("Tab");
    await expect(isFocused(second)).resolves.toBe(true);
    await page.keyboard.press("Tab");
    await expect(isFocused(item.getByRole("button", { name: "Show side by side" }))).resolves.toBe(true);
    await page.keyboard.press("Enter");
    await page.waitForURL((u) => ["cmp", "from", "to"].every((k) => u.searchParams.has(k)));

    const diff = page.getByTestId("revision-diff");
    await expectVisible(diff);
    await expect(diff.locator("caption").innerText()).resolves.toMatch(/Revision 1 compared with revision 3/);
    const value = diff.locator("tr", { has: page.locator("th", { hasText: /^Value/ }) });
    await expect(value.getAttribute("data-changed")).resolves.toBe("true");
    await expect(value.innerText()).resolves.toMatch(/1\.424 eV[\s\S]*1\.4225 eV/);
    await expect(diff.locator("tr", { has: page.locator("th", { hasText: /^Potential coefficients/ }) }).innerText()).resolves.toMatch(/U1 = 0\.71125 eV.*period a = 5\.65325 Å/);
    await expect(diff.locator("tr", { has: page.locator("th", { hasText: /^Source/ }) }).innerText()).resolves.toMatch(/Sze & Ng 2007[\s\S]*Vurgaftman et al\. 2001/);
    await item.screenshot({ path: artifactPath("material-compare-record.png") });
    await page.screenshot({ path: artifactPath("material-compare.png"), fullPage: true });

    // The same revision twice: a message at the second select, no comparison, the picks kept.
    const again = page.locator("li[data-record]", { hasText: "1.4225" }).filter({ hasText: "300 K" });
    await again.getByLabel("beside revision", { exact: true }).focus();
    await page.keyboard.press("ArrowDown");
    await page.keyboard.press("ArrowDown");
    await expect(picked(again.getByLabel("beside revision", { exact: true }))).resolves.toBe("1 · superseded");
    await page.keyboard.press("Tab");
    await page.keyboard.press("Enter");
    await page.waitForURL((u) => u.searchParams.get("from") === u.searchParams.get("to"));
    await expectFieldError(again.getByLabel("beside revision", { exact: true }), /Revision 1 is already the first pick/);
    await expect(page.getByTestId("revision-diff").count()).resolves.toBe(0);
    await again.screenshot({ path: artifactPath("material-compare-same.png") });

    // A hand-edited address with a revision id that does not exist: the page, with the message at that field.
    const url = new URL(page.url());
    url.searchParams.set("from", "999999");
    const edited = await page.goto(url.toString());
    expect(edited?.status()).toBe(200);
    const item3 = page.locator("li[data-record]", { hasText: "1.4225" }).filter({ hasText: "300 K" });
    await expectFieldError(item3.getByLabel("Show revision", { exact: true }), /revision id 999999, which is not in this record's history/);
    await page.close();
  });

  it("puts two revisions side by side on the record page, with the keyboard, and keeps old comparison links working", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl()}/materials/GaAs`);
    const item = page.locator("li[data-record]", { hasText: "1.4225" }).filter({ hasText: "300 K" });
    const recordId = await item.getAttribute("data-record");
    await page.goto(`${appUrl()}/records/${recordId}`);
    await page.getByRole("heading", { name: "History, newest first" }).waitFor();
    const first = page.getByLabel("Show revision", { exact: true });
    const second = page.getByLabel("beside revision", { exact: true });
    await expect(picked(first)).resolves.toBe("2 · superseded");
    await expect(picked(second)).resolves.toBe("3 · current");
    await second.focus();
    await page.keyboard.press("ArrowDown");
    await page.keyboard.press("ArrowDown");
    await page.keyboard.press("Shift+Tab");
    await page.keyboard.press("ArrowUp");
    await expect(picked(first)).resolves.toBe("3 · current");
    await expect(picked(second)).resolves.toBe("1 · superseded");
    await second.focus();
    await page.keyboard.press("Tab");
    await page.keyboard.press("Enter");
    await page.waitForURL((u) => u.searchParams.has("from"));
    const diff = page.getByTestId("revision-diff");
    await expect(diff.locator("caption").innerText()).resolves.toMatch(/Revision 3 compared with revision 1/);
    await page.screenshot({ path: artifactPath("record-compare.png"), fullPage: true });

    // A link made before the selects (cmp, from and to as revision ids) opens the same comparison.
    const ids = await page.locator(`#record-${recordId}-pick-from option`).evaluateAll((os) => os.map((o) => (o as HTMLOptionElement).value));
    const old = await page.goto(`${appUrl()}/records/${recordId}?cmp=${recordId}&from=${ids[2]}&to=${ids[0]}`);
    expect(old?.status()).toBe(200);
    await expect(page.getByTestId("revision-diff").locator("caption").innerText()).resolves.toMatch(/Revision 1 compared with revision 3/);
    const garbled = await page.goto(`${appUrl()}/records/${recordId}?from=abc&to=${ids[0]}`);
    expect(garbled?.status()).toBe(200);
    await expectFieldError(page.getByLabel("Show revision", { exact: true }), /“abc” is not a revision of this record/);
    await page.close();
  });

  it("shows a record's full history with its states, and our 404 for an unknown record", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl()}/registry?material=GaAs&quantity=lattice_a&status=all`);
    await page.locator("table tbody tr", { hasText: "295 K" }).getByRole("link", { name: "retired" }).click();
    await page.waitForURL(/\/records\/\d+$/);
    await page.getByRole("heading", { name: "History, newest first" }).waitFor();
    const history = await page.locator("section[id^=record-] tbody tr").allInnerTexts();
    expect(history[0]).toMatch(/retirement[\s\S]*retired/);
    expect(history[1]).toMatch(/5\.6533\s+Å[\s\S]*superseded/);
    await page.screenshot({ path: artifactPath("record-retired.png"), fullPage: true });
    const missing = await page.goto(`${appUrl()}/records/999999`);
    expect(missing?.status()).toBe(404);
    await expectVisible(page.getByRole("heading", { name: "Nothing is filed under this address" }));
    await page.close();
  });

  it("lists sources with the values that cite them", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl()}/sources`);
    const report = page.locator("li", { has: page.getByRole("link", { name: "KD-EPI-2026-014" }) });
    await expect(report.innerText()).resolves.toMatch(/AlGaAs[\s\S]*1\.838\s+eV/);
    await page.screenshot({ path: artifactPath("sources.png"), fullPage: true });
    await page.close();
  });

  it("sends an anonymous visitor to sign in", async () => {
    const anonymous = await launchBrowser();
    const page = await anonymous.newPage();
    await page.goto(`${appUrl()}/registry?material=GaAs`);
    expect(new URL(page.url()).pathname).toBe("/sign-in");
    expect(new URL(page.url()).searchParams.get("returnTo")).toBe("/registry?material=GaAs");
    await anonymous.close();
  });
});

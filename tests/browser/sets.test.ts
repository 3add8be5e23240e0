import { readFileSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import type { BrowserContext } from "playwright-core";
import { createPool } from "~/.server/db/client";
import { verifyReleaseText } from "~/domain/release-format";
import { artifactPath, launchBrowser } from "../support/browser";
import { signInAs } from "../support/session";

let browser: BrowserContext;
let leadId: number;

beforeAll(async () => {
  const pool = createPool(inject("e2eDatabaseUrl"), 2);
  const [rows] = await pool.query("SELECT id FROM users WHERE email = 'ravi.menon@kestrel-devices.test'");
  leadId = (rows as { id: number }[])[0].id;
  await pool.end();
  browser = await launchBrowser();
});
afterAll(async () => browser?.close());

describe("parameter sets in Chromium", () => {
  it("a lead creates a set, adds records by filter and one by one, freezes it and downloads a file that verifies", async () => {
    const appUrl = inject("appUrl");
    await signInAs(browser, appUrl, leadId);
    const page = await browser.newPage();
    const name = `Barrier check ${Date.now().toString(36)}`;

    await page.goto(`${appUrl}/sets`);
    await page.getByRole("link", { name: "New set" }).click();
    await page.getByLabel("Name", { exact: true }).fill(name);
    await page.getByLabel("Purpose").fill("AlAs barrier values for a quick band-offset check");
    await page.getByRole("button", { name: "Create the set" }).click();
    await page.waitForURL(/\/sets\/barrier-check-/);
    await page.getByRole("heading", { name, level: 1 }).waitFor();
    await page.getByText("No members yet.").waitFor();

    await page.getByLabel("Material").selectOption("AlAs");
    await page.getByLabel("Valley").selectOption("G");
    await page.getByRole("button", { name: "Show matching records" }).click();
    const addAll = page.getByRole("button", { name: /^Add all \d+ matching$/ });
    const matched = Number(/\d+/.exec((await addAll.textContent()) ?? "")![0]);
    expect(matched).toBeGreaterThan(2);
    await addAll.click();
    await page.getByText(`${matched} records added (${matched} matched the filter).`).waitFor();
    await page.locator("tr[data-record]").nth(matched - 1).waitFor();
    await expect(page.locator("tr[data-record]").count()).resolves.toBe(matched);

    await page.getByLabel("Material").selectOption("GaAs");
    await page.getByLabel("Quantity").selectOption("lattice_a");
    await page.getByLabel("Valley").selectOption("");
    await page.getByRole("button", { name: "Show matching records" }).click();
    await page.getByRole("button", { name: /^Add record \d+$/ }).first().click();
    await page.getByText(/^Record \d+ added\.$/).waitFor();
    await expect(page.locator("tr[data-record]").count()).resolves.toBe(matched + 1);

    await page.getByRole("button", { name: "Freeze release 1" }).click();
    await expect(page.locator("#confirm-error").textContent()).resolves.toMatch(/^Tick the box to confirm/);
    await page.getByLabel(/I have checked these/).check();
    await page.screenshot({ path: artifactPath("sets-before-freeze.png"), fullPage: true });
    await page.getByRole("button", { name: "Freeze release 1" }).click();
    await page.waitForURL(/\/releases\/1$/);
    await page.getByRole("heading", { name: `${name}, release 1` }).waitFor();
    const shown = (await page.getByTestId("release-sha256").textContent())!.trim();
    expect(shown).toMatch(/^[0-9a-f]{64}$/);

    const [download] = await Promise.all([page.waitForEvent("download"), page.getByRole("link", { name: "Download JSON" }).click()]);
    expect(download.suggestedFilename()).toMatch(/^barrier-check-[a-z0-9-]+-r1\.json$/);
    const file = await download.path();
    const verified = await verifyReleaseText(readFileSync(file!, "utf8"));
    expect(verified).toMatchObject({ ok: true, sha256: shown });
    if (verified.ok) expect(verified.content.items).toHaveLength(matched + 1);
    await page.screenshot({ path: artifactPath("sets-release.png"), fullPage: true });
    await page.close();
  });

  it("turns release notices on and off from the set page, in our words", async () => {
    const appUrl = inject("appUrl");
    await signInAs(browser, appUrl, leadId);
    const page = await browser.newPage();
    await page.goto(`${appUrl}/sets/hemt-baseline`);
    await page.getByRole("button", { name: "Notify me of new releases" }).click();
    await page.getByText("You will get a release notice each time this set is frozen.").waitFor();
    await page.getByRole("button", { name: "Stop release notices" }).click();
    await page.getByText("You no longer get release notices for this set.").waitFor();
    await page.getByRole("button", { name: "Notify me of new releases" }).waitFor();
    expect(await page.locator("main").innerText()).not.toMatch(/watch|\bpull\b/i);
    await page.goto(`${appUrl}/sets/hemt-baseline/releases/3`);
    await page.getByText("npm run --silent bandledger -- download hemt-baseline 3 --out hemt-baseline-r3.json").waitFor();
    expect(await page.locator("main").innerText()).not.toMatch(/hemt-baseline@3|\bpull\b/);
    await page.close();
  });

  it("lists /api/v1/account on the API page and marks its old address as answered for one release", async () => {
    const appUrl = inject("appUrl");
    await signInAs(browser, appUrl, leadId);
    const page = await browser.newPage();
    await page.goto(`${appUrl}/api-docs`);
    await page.locator('[data-endpoint="GET /api/v1/account"]').waitFor();
    const old = page.locator('[data-endpoint="GET /api/v1/whoami"]');
    await old.getByText("old address, answered for one release").waitFor();
    await old.getByText("Deprecated: use /api/v1/account.", { exact: false }).waitFor();
    await expect(page.locator('[data-endpoint="GET /api/v1/account"]').getByText("old address").count()).resolves.toBe(0);
    await page.getByText("npm run --silent bandledger -- download hemt-baseline 3 --out hemt-baseline-r3.json", { exact: false }).waitFor();
    await old.screenshot({ path: artifactPath("api-docs-old-address.png") });
    await page.close();
  });

  it("shows a reviewer what changed between releases 2 and 3 of HEMT baseline", async () => {
    const appUrl = inject("appUrl");
    const page = await browser.newPage();
    await page.goto(`${appUrl}/sets/hemt-baseline/compare?from=2&to=3`);
    await page.getByRole("heading", { name: "Release 2 → release 3" }).waitFor();
    const changed = page.getByRole("region", { name: "Changed" });
    await changed.getByText("GaAs Eg (Γ, 300 K)").waitFor();
    await page.getByRole("region", { name: "Added" }).getByText("AlGaAs Eg (Γ, x = 0.3, 300 K)").waitFor();
    await page.screenshot({ path: artifactPath("sets-compare.png"), fullPage: true });
    await page.close();
  });
});

import { readFileSync } from "node:fs";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import type { BrowserContext } from "playwright-core";
import { createPool } from "~/.server/db/client";
import { artifactPath, expectVisible, launchBrowser } from "../support/browser";
import { signInAs } from "../support/session";

// "Evaluate at…" on a release page and the uncertainties of the material page's derived values. Expected values by
// hand from the [V01] parameters the demo release pins (Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001),
// from memory), Varshni (1967) end points and the paper's AlGaAs bowing C = −0.127 + 1.310x eV.

let browser: BrowserContext;
let readerId: number;

beforeAll(async () => {
  const pool = createPool(inject("e2eDatabaseUrl"), 2);
  const [rows] = await pool.query("SELECT id FROM users WHERE email = 'priya.raman@kestrel-devices.test'");
  readerId = (rows as { id: number }[])[0].id;
  await pool.end();
  browser = await launchBrowser();
  await signInAs(browser, inject("appUrl"), readerId);
});
afterAll(async () => browser?.close());

describe("a release evaluated in Chromium", () => {
  it("Al(0.3)Ga(0.7)As at 77 K from HEMT baseline release 3: the table with its uncertainties and a CSV that names the release hash", async () => {
    const appUrl = inject("appUrl");
    const page = await browser.newPage();
    await page.goto(`${appUrl}/sets/hemt-baseline/releases/3`);
    const section = page.locator("section#evaluate");
    await expectVisible(section);
    await section.getByLabel("Temperature (K)").fill("77");
    await section.getByLabel("Material").selectOption("AlGaAs");
    await section.getByLabel("Composition x (alloys)").fill("0.3");
    await section.getByLabel("Substrate").selectOption("GaAs");
    await section.getByRole("button", { name: "Evaluate" }).click();
    await page.waitForURL(/temperature=77/);
    const gamma = section.locator('[data-material="AlGaAs"] [data-derived="eg-G"]');
    await gamma.filter({ hasText: "Eg(Γ, x = 0.3, 77 K)" }).waitFor();
    // 0.3·Eg(AlAs, 77 K) + 0.7·Eg(GaAs, 77 K) − 0.21·(−0.127 + 1.310·0.3), by hand: 1.92656 eV.
    const a = 3.099 - (0.885e-3 * 77 ** 2) / (77 + 530);
    const b = 1.519 - (0.5405e-3 * 77 ** 2) / (77 + 204);
    const expected = (0.3 * a + 0.7 * b - 0.21 * (-0.127 + 1.31 * 0.3)).toFixed(5);
    await expect(gamma.textContent()).resolves.toContain(expected);
    // [V01] states no uncertainties: said so, never a zero.
    await expect(gamma.locator('[data-uncertainty="not-stated"]').textContent()).resolves.toBe("± not stated");
    await expect(gamma.textContent()).resolves.not.toMatch(/± 0(\.0+)?(?![.\d])/);
    await expect(section.locator('[data-derived="mismatch"]').count()).resolves.toBe(1);
    await section.getByText(/not in HEMT baseline release 3|no 0 K Varshni fit at X in HEMT baseline release 3/).first().waitFor();
    // The same evaluation from the command line, the release named as two arguments.
    await section.getByText("npm run --silent bandledger -- evaluate hemt-baseline 3 --temperature 77 --material AlGaAs --x 0.3 --substrate GaAs", { exact: false }).waitFor();
    await expect(section.innerText()).resolves.not.toContain("hemt-baseline@3");
    await page.screenshot({ path: artifactPath("release-evaluate.png"), fullPage: true });

    const sha = (await page.getByTestId("release-sha256").textContent())!.trim();
    const [download] = await Promise.all([page.waitForEvent("download"), section.getByRole("link", { name: "Download this evaluation (CSV)" }).click()]);
    expect(download.suggestedFilename()).toBe("hemt-baseline-r3-77K-AlGaAs-x0.3-on-GaAs.csv");
    const csv = readFileSync((await download.path())!, "utf8").split("\r\n");
    expect(csv.slice(0, 2)).toEqual(['# schema: "bandledger.evaluation"', `# release_sha256: "${sha}"`]);
    expect(csv.find((l) => l.startsWith("AlGaAs,0.3,GaAs,eg-G,"))).toContain(expected);
    await page.close();
  });

  it("a wrong temperature is said at its field and what was typed stays", async () => {
    const page = await browser.newPage();
    await page.goto(`${inject("appUrl")}/sets/hemt-baseline/releases/3?temperature=-5&material=GaAs`);
    const section = page.locator("section#evaluate");
    await section.locator("#evaluate-temperature-error").filter({ hasText: "choose a temperature from 0 to 2000 K" }).waitFor();
    await expect(section.getByLabel("Temperature (K)").inputValue()).resolves.toBe("-5");
    await expect(section.getByLabel("Material").inputValue()).resolves.toBe("GaAs");
    await expect(section.getByTestId("evaluation").count()).resolves.toBe(0);
    await page.close();
  });

  it("the material page's derived values show uncertainties the same way: the stated AlGaAs gap 1.838 ± 0.003 eV beside the derived one", async () => {
    const page = await browser.newPage();
    await page.goto(`${inject("appUrl")}/materials/AlGaAs?temperature=300&x=0.3&substrate=GaAs`);
    const gamma = page.locator('section#derived [data-derived="eg-G"]');
    await gamma.filter({ hasText: "stated 1.838 ± 0.003" }).waitFor();
    await expect(gamma.locator("[data-uncertainty]").textContent()).resolves.toBe("± not stated");
    await page.locator("section#derived").screenshot({ path: artifactPath("material-algaas-uncertainty.png") });
    await page.close();
  });
});

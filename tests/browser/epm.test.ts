import { drizzle } from "drizzle-orm/mysql2";
import { and, eq } from "drizzle-orm";
import type { BrowserContext, Locator, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { artifactPath, expectVisible, launchBrowser } from "../support/browser";
import { HttpClient } from "../support/route-access";
import { signInAs } from "../support/session";

// [CB66] Cohen & Bergstresser, Phys. Rev. 141, 789 (1966): form factors (Ry) and lattice constants, table values and
// silicon's Eg(Γ) = 3.4 eV from memory. [V01] Vurgaftman et al., J. Appl. Phys. 89, 5815 (2001): GaAs 0 K gaps, from memory.

const appUrl = inject("appUrl");
let browser: BrowserContext;
const pool = createPool(inject("e2eDatabaseUrl"), 2);
const db = drizzle(pool, { schema, mode: "default" });
let readerId: number;

beforeAll(async () => {
  browser = await launchBrowser();
  readerId = (await db.select().from(schema.users).where(eq(schema.users.email, "priya.raman@kestrel-devices.test")))[0].id;
  await signInAs(browser, appUrl, readerId);
});
afterAll(async () => {
  await browser?.close();
  await pool.end();
});

async function shoot(page: Page, name: string, part?: Locator) {
  for (const colorScheme of ["light", "dark"] as const) {
    await page.emulateMedia({ colorScheme });
    const path = artifactPath(`${name}-${colorScheme}.png`);
    await (part ? part.screenshot({ path }) : page.screenshot({ path, fullPage: true }));
  }
  await page.emulateMedia({ colorScheme: "light" });
}

const verdictOf = (page: Page) => page.locator("[data-epm-result]").getAttribute("data-epm-result");

function watchErrors(page: Page): string[] {
  const errors: string[] = [];
  page.on("pageerror", (e) => errors.push(e.message));
  page.on("console", (m) => {
    if (m.type() === "error") errors.push(m.text());
  });
  return errors;
}

describe("the crystal check page", () => {
  it("opens on silicon [CB66], draws the bands, and updates the verdict while a stated gap is typed", async () => {
    const page = await browser.newPage();
    const errors = watchErrors(page);
    await page.goto(`${appUrl}/checks/epm`);
    await expectVisible(page.getByRole("heading", { name: /Crystal check/ }));
    await expectVisible(page.getByRole("navigation").getByRole("link", { name: "Crystal check" }).first());
    // Stated Eg(Γ) = 3.4 eV against the converged E5(Γ) − E4(Γ) of the same form factors: within 0.15 eV.
    await expect(verdictOf(page)).resolves.toBe("pass");
    await expect(page.locator("svg[role=img] title").first().textContent()).resolves.toMatch(/^Bands along L–Γ–X–U\|K–Γ/);
    await expect(page.locator("svg[role=img] path[data-band]").count()).resolves.toBe(8);
    await expectVisible(page.locator("[data-epm-caution]"));
    await expect(page.locator("[data-epm-fundamental]").getAttribute("data-epm-fundamental")).resolves.toBe("Δ");
    await page.waitForFunction(() => (window as unknown as { __reactRouterContext?: unknown }).__reactRouterContext !== undefined);
    await shoot(page, "checks-epm-silicon");
    const before = page.url();

    // 3.4 + 0.25 eV: beyond the tolerance, within three times it.
    await page.getByLabel("Eg(Γ)").fill("3.65");
    await page.locator('[data-epm-result="warn"]').waitFor();
    await page.getByLabel("Eg(Γ)").fill("4.2");
    await page.locator('[data-epm-result="fail"]').waitFor();
    expect(page.url()).toBe(before);
    expect(errors).toEqual([]);
    await page.close();
  });

  it("refuses bad input at its field while typing, and the check comes back when it is corrected", async () => {
    const page = await browser.newPage();
    const errors = watchErrors(page);
    await page.goto(`${appUrl}/checks/epm`);
    await page.waitForFunction(() => (window as unknown as { __reactRouterContext?: unknown }).__reactRouterContext !== undefined);
    await page.getByLabel("Lattice constant a").fill("0");
    await page.locator("#epm-lattice-error").waitFor();
    await expect(page.locator("#epm-lattice-error").textContent()).resolves.toBe("The lattice constant lies between 2 and 10 Å.");
    await expect(verdictOf(page)).resolves.toBe("none");
    await page.getByLabel("Lattice constant a").fill("5.43");
    await page.locator('[data-epm-result="pass"]').waitFor();

    // An antisymmetric form factor on diamond is refused at V_A(3); the other fields keep what was typed.
    await page.getByLabel("V_A(3)").fill("0.07");
    await page.locator("#epm-a3-error").waitFor();
    await expect(page.locator("#epm-a3-error").textContent()).resolves.toMatch(/^V_A\(3\): Diamond has one kind of atom/);
    await expect(page.getByLabel("V_S(3)").inputValue()).resolves.toBe("-0.21");
    await shoot(page, "checks-epm-refused");
    await page.getByLabel("zinc blende").check();
    await page.locator('[data-epm-result="pass"]').waitFor();
    await expect(page.locator("#epm-a3-error").count()).resolves.toBe(0);

    await page.getByLabel("V_S(8)").fill("0.04x");
    await page.locator("#epm-s8-error").waitFor();
    await page.getByLabel("V_S(8)").fill("");
    await page.locator("#epm-s8-error").filter({ hasText: "Enter V_S(8) in Ry." }).waitFor();
    expect(errors).toEqual([]);
    await page.close();
  });

  it("GaAs [CB66] against its 0 K gaps [V01]: a direct gap at Γ that passes, X and L that warn", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl}/checks/epm`);
    await page.getByRole("link", { name: "GaAs against its 0 K gaps" }).click();
    await page.waitForURL(/structure=zincblende/);
    await page.locator('[data-epm-result="warn"]').waitFor();
    await expect(page.locator("[data-epm-fundamental]").getAttribute("data-epm-fundamental")).resolves.toBe("Γ");
    await expect(page.locator('[data-epm-gap="gamma"] [data-verdict]').getAttribute("data-verdict")).resolves.toBe("pass");
    await expect(page.locator('[data-epm-gap="x"] [data-verdict]').getAttribute("data-verdict")).resolves.toBe("warn");
    await shoot(page, "checks-epm-gaas", page.locator("[data-epm-result]"));
    await page.close();
  });

  it("on GaAs's V_S(3) record page [CB66]: the three gap results with the caution, and a link to the band structure", async () => {
    const [row] = await db
      .select({ id: schema.records.id })
      .from(schema.records)
      .innerJoin(schema.materials, eq(schema.materials.id, schema.records.materialId))
      .innerJoin(schema.quantities, eq(schema.quantities.id, schema.records.quantityId))
      .where(and(eq(schema.materials.key, "GaAs"), eq(schema.quantities.key, "ff_vs3")));
    const page = await browser.newPage();
    await page.goto(`${appUrl}/records/${row.id}`);
    const report = page.locator("[data-check-report]");
    await report.locator('[data-check="epm"]').first().waitFor();
    await expect(report.locator('[data-check="epm"]').count()).resolves.toBe(3);
    await expectVisible(report.locator("[data-epm-caution]"));
    await shoot(page, "record-gaas-vs3-checks", report);
    await report.getByRole("link", { name: "band structure in the crystal check" }).first().click();
    await page.waitForURL(/\/checks\/epm\?structure=zincblende/);
    await page.locator("[data-epm-result]").waitFor();
    await expect(page.locator("[data-epm-fundamental]").getAttribute("data-epm-fundamental")).resolves.toBe("Γ");
    await expect(page.getByLabel("V_S(3)").inputValue()).resolves.toBe("-3.12930941828862");
    await page.close();
  });

  it("answers a browser without JavaScript: the server renders the verdict, and bad input is a 400 with the message at its field", async () => {
    const client = await HttpClient.signedIn(appUrl, readerId);
    const good = await client.get("/checks/epm?structure=diamond&lattice=0.543&unit=nm&ffunit=ry&s3=-0.21&s8=0.04&s11=0.08&gamma=3.4&tolerance=0.15");
    expect(good.status).toBe(200);
    const html = await good.text();
    expect(html).toContain('data-epm-result="pass"');
    expect(html).toMatch(/<path[^>]+data-band="5"/);
    const bad = await client.get("/checks/epm?structure=diamond&lattice=5.43&ffunit=hartree&s3=-0.21&s8=0.04&s11=0.08");
    expect(bad.status).toBe(400);
    const badHtml = await bad.text();
    expect(badHtml).toContain("is not a unit of the form factors: choose Ry or eV.");
    expect(badHtml).toMatch(/<select[^>]*id="epm-ffunit"[^>]*aria-invalid="true"/);
    expect(badHtml).toMatch(/<input[^>]*id="epm-s3"[^>]*value="-0.21"/);
  });
});

import { drizzle } from "drizzle-orm/mysql2";
import { and, eq } from "drizzle-orm";
import type { BrowserContext, Locator, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { artifactPath, launchBrowser, expectVisible } from "../support/browser";
import { HttpClient } from "../support/route-access";
import { signInAs } from "../support/session";

// Values come from the demo registry and these published sources:
//   [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), from memory; [Var67] Varshni, Physica 34, 149 (1967);
//   [Kittel] Kittel, Introduction to Solid State Physics, 8th ed., ch. 7: two-band gap 2|U_G|, and a potential U0·cos(Gx)
//   has U_G = U0/2; calc: computed from those inputs with the formula named.

const appUrl = inject("appUrl");
let browser: BrowserContext;
const pool = createPool(inject("e2eDatabaseUrl"), 2);
const db = drizzle(pool, { schema, mode: "default" });
let readerId: number;
const userId = async (email: string) => (await db.select().from(schema.users).where(eq(schema.users.email, email)))[0].id;

async function recordId(material: string, quantity: string, conditionKey: string): Promise<number> {
  const [row] = await db
    .select({ id: schema.records.id })
    .from(schema.records)
    .innerJoin(schema.materials, eq(schema.materials.id, schema.records.materialId))
    .innerJoin(schema.quantities, eq(schema.quantities.id, schema.records.quantityId))
    .where(and(eq(schema.materials.key, material), eq(schema.quantities.key, quantity), eq(schema.records.conditionKey, conditionKey)));
  return row.id;
}

beforeAll(async () => {
  browser = await launchBrowser();
  readerId = await userId("priya.raman@kestrel-devices.test");
  await signInAs(browser, appUrl, readerId);
});
afterAll(async () => {
  await browser?.close();
  await pool.end();
});

// Light and dark; a long page is shot at the part under test.
async function shoot(page: Page, name: string, part?: Locator) {
  for (const colorScheme of ["light", "dark"] as const) {
    await page.emulateMedia({ colorScheme });
    const path = artifactPath(`${name}-${colorScheme}.png`);
    await (part ? part.screenshot({ path }) : page.screenshot({ path, fullPage: true }));
  }
  await page.emulateMedia({ colorScheme: "light" });
}

const verdictOf = (page: Page) => page.locator("[data-nfe-result]").getAttribute("data-nfe-result");

describe("the nearly-free-electron check page", () => {
  it("updates the verdict while the stated gap is typed, without leaving the page [Kittel]", async () => {
    const page = await browser.newPage();
    const errors: string[] = [];
    page.on("pageerror", (e) => errors.push(e.message));
    page.on("console", (m) => {
      if (m.type() === "error") errors.push(m.text());
    });
    await page.goto(`${appUrl}/checks/nfe`);
    await expectVisible(page.getByRole("heading", { name: "Nearly-free-electron check" }));
    // The first visit opens on the two-band example: U_1 = 0.1 eV, no stated gap yet.
    await expect(verdictOf(page)).resolves.toBe("none");
    await expect(page.locator("svg[role=img] title").first().textContent()).resolves.toMatch(/^E\(k\) in the reduced zone/);
    await page.waitForFunction(() => (window as unknown as { __reactRouterContext?: unknown }).__reactRouterContext !== undefined);
    const before = page.url();

    await page.getByLabel("Stated gap (eV)").fill("0.2");
    await page.waitForSelector('[data-nfe-result="pass"]');
    expect(page.url()).toBe(before);
    await expectVisible(page.getByText("first order, 2|U_n|"));
    await shoot(page, "checks-nfe-pass");

    await page.getByLabel("Stated gap (eV)").fill("0.1");
    await page.waitForSelector('[data-nfe-result="fail"]');
    await expectVisible(page.getByText(/half the computed one/));
    expect(page.url()).toBe(before);

    await page.getByLabel("Period a").fill("0");
    await page.waitForSelector("#nfe-period-error");
    await expect(page.locator("#nfe-period-error").textContent()).resolves.toBe("The period lies between 0 and 100 Å.");
    await expect(verdictOf(page)).resolves.toBe("none");
    await page.getByLabel("Period a").fill("5.65325");
    await page.waitForSelector('[data-nfe-result="fail"]');
    await shoot(page, "checks-nfe-fail");
    expect(errors).toEqual([]);
    await page.close();
  });

  it("submits as an ordinary GET form: the address holds the inputs, and a second coefficient row is added server-side", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl}/checks/nfe?period=5.65325&unit=angstrom&n=1&u=0.71125&gap=1&mass=1&stated=1.4225&tolerance=0.01`);
    // U_1 alone: the central equation stays within 10 meV of 2|U_1|; U_2 = 0.025 eV moves it beyond.
    await expect(verdictOf(page)).resolves.toBe("pass");
    await page.getByRole("button", { name: "Add a coefficient row" }).click();
    await page.waitForURL(/rows=2/);
    await page.getByLabel("Order n of coefficient 2").fill("2");
    await page.getByLabel("U_n of coefficient 2 (eV)").fill("0.0250");
    await page.getByRole("button", { name: "Check", exact: true }).click();
    await page.waitForURL(/u=0\.0250/);
    await page.locator('[data-nfe-result="warn"]').waitFor();
    await expectVisible(page.getByText("the stated gap matches the first-order estimate 2|U_n|, not the central equation"));
    await shoot(page, "checks-nfe-demo-potential");
    await page.close();
  });

  it("answers the same verdict to a browser without JavaScript (the server renders it)", async () => {
    const client = await HttpClient.signedIn(appUrl, readerId);
    const html = await (await client.get("/checks/nfe?period=0.565325&unit=nm&n=1&u=0.1&stated=0.1")).text();
    expect(html).toContain('data-nfe-result="fail"');
    expect(html).toMatch(/<path[^>]+d="M/);
  });
});

describe("derived values on the material page", () => {
  it("GaAs at 77 K: the Γ gap 1.507596 eV by Varshni [V01 calc], with its formula, inputs and plot", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl}/materials/GaAs`);
    const section = page.locator("section#derived");
    await expectVisible(section);
    await section.getByLabel("Temperature (K)").fill("77");
    await section.getByRole("button", { name: "Derive" }).click();
    await page.waitForURL(/temperature=77/);
    const gamma = section.locator('[data-derived="eg-G"]');
    await gamma.filter({ hasText: "Eg(Γ, 77 K)" }).waitFor();
    await expect(gamma.textContent()).resolves.toMatch(/1\.5076/);
    await expect(gamma.textContent()).resolves.toMatch(/Eg\(T\) = Eg\(0\) − αT²\/\(T \+ β\)/);
    await expect(gamma.getByRole("link", { name: /^rev\. \d+$/ }).count()).resolves.toBe(3);
    await expect(section.locator("svg[role=img] title").first().textContent()).resolves.toMatch(/Band gap of GaAs against temperature/);
    await shoot(page, "material-gaas-derived", section);
    await page.close();
  });

  it("Al(x)Ga(1−x)As: Eg(x) at a chosen temperature with the Γ–X crossover and the lattice match marked", async () => {
    const page = await browser.newPage();
    await page.goto(`${appUrl}/materials/AlGaAs?temperature=300&x=0.3&substrate=GaAs`);
    const section = page.locator("section#derived");
    await shoot(page, "material-algaas-derived", section);
    await expect(section.locator('[data-derived="eg-G"]').textContent()).resolves.toMatch(/1\.84079/);
    await expect(section.locator('[data-derived="lattice-a"]').textContent()).resolves.toMatch(/5\.6556/);
    await expect(section.locator("figcaption").filter({ hasText: /Γ–X crossover x = 0\.4\d\d/ }).count()).resolves.toBe(1);
    await page.close();
  });
});

describe("check reports on the record page, the proposal form and the review page", () => {
  it("the GaAs 300 K gap record: right to first order only (warn), with first order beside the central equation and E(k)", async () => {
    await signInAs(browser, appUrl, readerId);
    const page = await browser.newPage();
    await page.goto(`${appUrl}/records/${await recordId("GaAs", "eg", "T=300|V=G|x=")}`);
    const report = page.getByRole("region", { name: "Consistency checks" });
    await expect(report.getAttribute("data-check-report")).resolves.toBe("warn");
    await expect(report.locator('[data-check="nfe"]').getAttribute("data-verdict")).resolves.toBe("warn");
    await expect(report.locator('[data-check="varshni"]').getAttribute("data-verdict")).resolves.toBe("pass");
    await expect(report.getByRole("table", { name: "First order against the central equation" }).textContent()).resolves.toMatch(/first order 2\|U_1\|1\.4225/);
    await expect(report.locator("svg[role=img]").count()).resolves.toBe(1);
    await shoot(page, "record-gaas-gap-checks", report);
    await page.close();
  });

  it("updates while a contributor types a new value, then shows the lead the same report on review [Var67, Kittel]", async () => {
    await signInAs(browser, appUrl, await userId("tomas.okafor@kestrel-devices.test"));
    const page = await browser.newPage();
    const errors: string[] = [];
    page.on("pageerror", (e) => errors.push(e.message));
    await page.goto(`${appUrl}/proposals/new?record=${await recordId("GaAs", "eg", "T=77|V=G|x=")}&kind=revision`);
    await page.waitForFunction(() => Boolean((window as unknown as { __reactRouterRouteModules?: unknown }).__reactRouterRouteModules));
    const live = page.locator("[data-live-check] section");
    const address = page.url();
    await page.getByLabel("Value", { exact: true }).fill("1.40");
    await live.locator('[data-check="varshni"][data-verdict="fail"]').waitFor();
    // The fit gives 1.507596 eV at 77 K (calc, [V01]); the record's 1.5076 eV passes.
    await page.getByLabel("Value", { exact: true }).fill("1.5076");
    await live.locator('[data-check="varshni"][data-verdict="pass"]').waitFor();
    await page.getByLabel("n (row 1)").fill("1");
    await page.getByLabel("U_n (eV, row 1)").fill("0.7538");
    await page.getByLabel("n (row 2)").fill("2");
    await page.getByLabel("U_n (eV, row 2)").fill("0.025");
    await page.getByLabel("Period a (Å)").fill("5.65325");
    await live.locator('[data-check="nfe"][data-verdict="warn"]').waitFor();
    expect(page.url()).toBe(address);
    await shoot(page, "proposal-form-live-check", live);

    await page.getByLabel("Method").selectOption("calculated");
    await page.getByRole("textbox", { name: "DOI" }).fill("10.1063/1.1368156");
    await page.getByLabel("Title").fill("Band parameters for III–V compound semiconductors and their alloys");
    await page.getByLabel("Where in the source").fill("GaAs parameter table; model potential of the team");
    await page.getByRole("button", { name: "Submit for a decision" }).click();
    await page.waitForURL(/\/proposals\/\d+$/);
    const proposalUrl = page.url();
    expect(errors).toEqual([]);
    await page.close();

    await signInAs(browser, appUrl, await userId("hanna.lindqvist@kestrel-devices.test"));
    const review = await browser.newPage();
    await review.goto(proposalUrl);
    const report = review.getByRole("region", { name: "Consistency checks" });
    await expect(report.getAttribute("data-check-report")).resolves.toBe("warn");
    await expect(report.locator('[data-check="nfe"]').textContent()).resolves.toMatch(/the stated gap matches the first-order estimate/);
    await expect(report.locator('[data-check="varshni"]').getAttribute("data-verdict")).resolves.toBe("pass");
    await shoot(review, "review-checks", report);
    await review.close();
  });
});

describe("the admin's tolerance page", () => {
  it("keeps a wrong tolerance at its field with the message", async () => {
    await signInAs(browser, appUrl, await userId("ines.carvalho@kestrel-devices.test"));
    const page = await browser.newPage();
    await page.goto(`${appUrl}/admin/tolerances`);
    const row = page.locator('tr[data-quantity="eg"]');
    await row.getByLabel("Tolerance of band gap").fill("2");
    await row.getByRole("button", { name: "Save" }).click();
    await page.locator("#tolerance-eg-error").waitFor();
    await expect(page.locator("#tolerance-eg-error").textContent()).resolves.toMatch(/^At most 1 eV/);
    await expect(row.getByLabel("Tolerance of band gap").inputValue()).resolves.toBe("2");
    await shoot(page, "admin-tolerances");
    await page.close();
  });
});

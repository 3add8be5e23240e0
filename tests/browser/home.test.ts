import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import type { BrowserContext } from "playwright-core";
import { artifactPath, launchBrowser, expectVisible } from "../support/browser";

let browser: BrowserContext;
beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => browser?.close());

describe("home page in Chromium", () => {
  it("renders the shell in IBM Plex Sans shipped with the app", async () => {
    const page = await browser.newPage();
    const response = await page.goto(inject("appUrl") + "/");
    expect(response?.status()).toBe(200);
    await expect(page.locator("header").getByText("Bandledger", { exact: true })).toBeTruthy();
    const fonts = await page.evaluate(async () => {
      await document.fonts.ready;
      const loaded = [...document.fonts].filter((f) => f.status === "loaded").map((f) => f.family.replace(/"/g, ""));
      return { computed: getComputedStyle(document.body).fontFamily, loaded, check: document.fonts.check('16px "IBM Plex Sans"') };
    });
    expect(fonts.computed.split(",")[0].replace(/"/g, "").trim()).toBe("IBM Plex Sans");
    expect(fonts.loaded).toContain("IBM Plex Sans");
    const fontRequests = await page.evaluate(() => performance.getEntriesByType("resource").map((e) => e.name).filter((n) => /ibm-plex-sans-latin-400/.test(n)));
    expect(fontRequests.length).toBeGreaterThan(0);
    expect(fontRequests.every((u) => u.startsWith(inject("appUrl")))).toBe(true);
    await page.screenshot({ path: artifactPath("home.png"), fullPage: true });
    await page.close();
  });

  it("sends a nonce-based Content-Security-Policy that the page's own scripts satisfy", async () => {
    const page = await browser.newPage();
    const violations: string[] = [];
    page.on("console", (m) => {
      if (/Content Security Policy|Refused to/i.test(m.text())) violations.push(m.text());
    });
    const response = await page.goto(inject("appUrl") + "/");
    const csp = response?.headers()["content-security-policy"] ?? "";
    const nonce = /'nonce-([^']+)'/.exec(csp)?.[1];
    expect(nonce).toBeTruthy();
    expect(csp).toContain("frame-ancestors 'none'");
    expect(response?.headers()["x-content-type-options"]).toBe("nosniff");
    const again = await (await fetch(inject("appUrl") + "/")).headers.get("content-security-policy");
    expect(again).not.toContain(nonce!);
    // Hydration ran: React Router's client router exists only when its scripts were allowed to run.
    await page.waitForFunction(() => Boolean((window as unknown as { __reactRouterRouteModules?: unknown }).__reactRouterRouteModules));
    expect(violations).toEqual([]);
    await page.close();
  });

  it("answers an unknown address with our own 404 page", async () => {
    const page = await browser.newPage();
    const response = await page.goto(inject("appUrl") + "/no/such/page");
    expect(response?.status()).toBe(404);
    await expectVisible(page.getByRole("heading", { name: "Nothing is filed under this address" }));
    await page.close();
  });
});

import { drizzle } from "drizzle-orm/mysql2";
import { eq } from "drizzle-orm";
import type { BrowserContext, Page } from "playwright-core";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { artifactPath, launchBrowser } from "../support/browser";
import { readLastMail } from "../support/mailbox";
import { signInAs } from "../support/session";

const appUrl = inject("appUrl");
const mailboxDir = inject("mailboxDir");
let browser: BrowserContext;
const pool = createPool(inject("e2eDatabaseUrl"), 2);
const db = drizzle(pool, { schema, mode: "default" });

beforeAll(async () => {
  browser = await launchBrowser();
});
afterAll(async () => {
  await browser?.close();
  await pool.end();
});

async function requestCode(page: Page, email: string) {
  const after = Date.now();
  await page.getByLabel("E-mail address", { exact: true }).fill(email);
  await page.getByRole("button", { name: "Send me a code" }).click();
  await page.waitForURL(`${appUrl}/sign-in/code`);
  const mail = await readLastMail(mailboxDir, email, { after });
  return {
    code: /\b(\d{6})\b/.exec(mail.text)![1],
    link: /(http:\/\/\S+\/auth\/magic-link\?t=\S+)/.exec(mail.text)![1],
    mail,
  };
}

describe("signing in in Chromium", () => {
  it("asks for a code, reads it from the mail, and lands signed in", async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    await page.goto(`${appUrl}/sign-in`);
    await page.screenshot({ path: artifactPath("sign-in-request.png"), fullPage: true });
    const { code, mail } = await requestCode(page, "hanna.lindqvist@kestrel-devices.test");
    expect(mail.html).toContain(code);
    await expect(page.getByTestId("neutral-notice").textContent()).resolves.toContain("hanna.lindqvist@kestrel-devices.test");
    await page.getByLabel("Six-digit code").fill(code);
    await page.screenshot({ path: artifactPath("sign-in-code.png"), fullPage: true });
    await page.getByRole("button", { name: "Sign in", exact: true }).click();
    await page.waitForURL(`${appUrl}/`);
    await page.getByRole("status").filter({ hasText: "Signed in as Hanna Lindqvist" }).waitFor();
    await page.locator("[data-slot=user]").filter({ hasText: "Hanna Lindqvist" }).waitFor();
    await page.screenshot({ path: artifactPath("sign-in-done.png"), fullPage: true });

    await page.getByRole("button", { name: "Sign out" }).click();
    await page.getByRole("status").filter({ hasText: "You are signed out." }).waitFor();
    expect(page.url()).toBe(`${appUrl}/`);
    await expect(page.locator("[data-slot=user]").textContent()).resolves.not.toContain("Hanna");
    await page.close();
  });

  it("signs in through the magic link and returns to the page that asked for sign-in", async () => {
    await browser.clearCookies();
    const page = await browser.newPage();
    await page.goto(`${appUrl}/account`);
    await page.waitForURL(`${appUrl}/sign-in?returnTo=%2Faccount`);
    await page.getByText("Sign in to continue where you were").waitFor();
    const { link } = await requestCode(page, "priya.raman@kestrel-devices.test");
    await page.goto(link);
    await page.waitForURL(`${appUrl}/account`);
    await expect(page.getByRole("heading", { level: 1 }).textContent()).resolves.toBe("Priya Raman");
    await page.screenshot({ path: artifactPath("sign-in-magic-link.png"), fullPage: true });
    await page.close();
  });

  it("keeps what was typed when a form meets an expired session, and puts it back after sign-in", async () => {
    await browser.clearCookies();
    const [mei] = await db.select().from(schema.users).where(eq(schema.users.email, "mei.tanaka@kestrel-devices.test"));
    await signInAs(browser, appUrl, mei.id);
    const page = await browser.newPage();
    await page.goto(`${appUrl}/account`);
    await page.getByLabel("Name", { exact: true }).fill("Mei Tanaka-Ross");
    await page.getByLabel("One digest a day").check();
    await browser.clearCookies();
    await page.getByRole("button", { name: "Save" }).click();
    await page.waitForURL(`${appUrl}/sign-in?returnTo=%2Faccount`);
    const { code } = await requestCode(page, "mei.tanaka@kestrel-devices.test");
    await page.getByLabel("Six-digit code").fill(code);
    await page.getByRole("button", { name: "Sign in", exact: true }).click();
    await page.waitForURL(`${appUrl}/account`);
    await page.getByText("We kept what you typed before signing in").waitFor();
    await expect(page.getByLabel("Name", { exact: true }).inputValue()).resolves.toBe("Mei Tanaka-Ross");
    await expect(page.getByLabel("One digest a day").isChecked()).resolves.toBe(true);
    await page.screenshot({ path: artifactPath("sign-in-kept-form.png"), fullPage: true });
    await page.getByRole("button", { name: "Save" }).click();
    await page.getByRole("status").filter({ hasText: "Your details are saved." }).waitFor();
    await expect(page.getByText("We kept what you typed before signing in").count()).resolves.toBe(0);
    const [after] = await db.select().from(schema.users).where(eq(schema.users.id, mei.id));
    expect(after).toMatchObject({ name: "Mei Tanaka-Ross", notifyMode: "digest" });

    await page.getByLabel("Token name").fill("k·p runs on cluster A");
    await page.getByRole("button", { name: "Create read token" }).click();
    const token = await page.getByLabel("New token").inputValue();
    expect(token).toMatch(/^blt_[A-Za-z0-9_-]{43}$/);
    await page.getByRole("cell", { name: "k·p runs on cluster A", exact: true }).waitFor();
    await expect(page.getByLabel("Token name").inputValue()).resolves.toBe("");
    await page.screenshot({ path: artifactPath("account-token.png"), fullPage: true });
    const account = await fetch(`${appUrl}/api/v1/account`, { headers: { authorization: `Bearer ${token}` } });
    expect((await account.json()).user.email).toBe("mei.tanaka@kestrel-devices.test");
    await page.reload();
    await expect(page.content()).resolves.not.toContain(token);
    await page.close();
  });
});

import { drizzle } from "drizzle-orm/mysql2";
import { eq } from "drizzle-orm";
import type { BrowserContext } from "playwright-core";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { artifactPath, launchBrowser } from "../support/browser";
import { readLastMail } from "../support/mailbox";
import { signInAs } from "../support/session";

const appUrl = inject("appUrl");
const mailboxDir = inject("mailboxDir");
const NEW_ADDRESS = "li.wei@kestrel-devices.test";
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

describe("an admin invites a new reader, who signs in and sees only what a reader may", () => {
  it("invites from the people page", async () => {
    await browser.clearCookies();
    const [ines] = await db.select().from(schema.users).where(eq(schema.users.email, "ines.carvalho@kestrel-devices.test"));
    await signInAs(browser, appUrl, ines.id);
    const page = await browser.newPage();
    await page.goto(`${appUrl}/admin/users`);
    await page.getByLabel("E-mail address", { exact: true }).fill("not an address");
    await page.getByLabel("Name", { exact: true }).fill("Li Wei");
    await page.getByRole("button", { name: "Send invitation" }).click();
    await page.getByText("Enter an e-mail address such as name@example.com.").waitFor();
    await expect(page.getByLabel("Name", { exact: true }).inputValue()).resolves.toBe("Li Wei");
    await page.screenshot({ path: artifactPath("admin-invite-error.png"), fullPage: true });

    await page.getByLabel("E-mail address", { exact: true }).fill(NEW_ADDRESS);
    await page.getByLabel("Role", { exact: true }).selectOption("reader");
    await page.getByRole("button", { name: "Send invitation" }).click();
    await page.getByRole("status").filter({ hasText: "Invited Li Wei" }).waitFor();
    await page.locator(`tr[data-user="${NEW_ADDRESS}"]`).waitFor();
    await page.screenshot({ path: artifactPath("admin-users.png"), fullPage: true });
    await page.close();
  });

  it("the invitation arrives in the local mailbox, and the new reader signs in with the code", async () => {
    const invitation = await readLastMail(mailboxDir, NEW_ADDRESS);
    expect(invitation.subject).toBe("Inês Carvalho invited you to Bandledger");
    const signInLink = /(http:\/\/\S+\/sign-in\?email=\S+)/.exec(invitation.text)![1];

    const mailbox = await browser.newPage();
    await mailbox.goto(`${appUrl}/dev/mailbox`);
    await mailbox.getByRole("link", { name: "Inês Carvalho invited you to Bandledger" }).first().click();
    await mailbox.waitForURL(/\/dev\/mailbox\/.+\.eml$/);
    await mailbox.frameLocator("iframe[title='HTML part of the message']").getByText("There is no password").waitFor();
    await mailbox.screenshot({ path: artifactPath("dev-mailbox-invitation.png"), fullPage: true });
    await mailbox.close();

    await browser.clearCookies();
    const page = await browser.newPage();
    await page.goto(signInLink);
    await expect(page.getByLabel("E-mail address", { exact: true }).inputValue()).resolves.toBe(NEW_ADDRESS);
    const after = Date.now();
    await page.getByRole("button", { name: "Send me a code" }).click();
    await page.waitForURL(`${appUrl}/sign-in/code`);
    const mail = await readLastMail(mailboxDir, NEW_ADDRESS, { after });
    await page.getByLabel("Six-digit code").fill(/\b(\d{6})\b/.exec(mail.text)![1]);
    await page.getByRole("button", { name: "Sign in", exact: true }).click();
    await page.waitForURL(`${appUrl}/`);
    await page.locator("[data-slot=user]").getByText("Li Wei").waitFor();

    const nav = await page.getByRole("navigation", { name: "Primary", exact: true }).getByRole("link").allTextContents();
    expect(nav).toEqual(["Registry", "Materials", "Sources", "Sets", "NFE check", "Crystal check", "API"]);
    await page.screenshot({ path: artifactPath("reader-home.png"), fullPage: true });

    const admin = await page.goto(`${appUrl}/admin/users`);
    expect(admin?.status()).toBe(403);
    await page.getByRole("heading", { name: "Your role does not open this page" }).waitFor();
    await page.screenshot({ path: artifactPath("reader-admin-403.png"), fullPage: true });
    await page.close();
  });

  it("shows families, lead assignments and the audit log to the admin", async () => {
    await browser.clearCookies();
    const [ines] = await db.select().from(schema.users).where(eq(schema.users.email, "ines.carvalho@kestrel-devices.test"));
    await signInAs(browser, appUrl, ines.id);
    const page = await browser.newPage();
    await page.goto(`${appUrl}/admin/families`);
    await page.getByRole("cell", { name: "arsenides", exact: true }).waitFor();
    await page.screenshot({ path: artifactPath("admin-families.png"), fullPage: true });
    await page.goto(`${appUrl}/admin/leads`);
    await expect(page.locator("[data-family=arsenides]").textContent()).resolves.toContain("Ravi Menon");
    await page.screenshot({ path: artifactPath("admin-leads.png"), fullPage: true });
    await page.goto(`${appUrl}/admin/audit`);
    await page.getByLabel("Action").selectOption("user.invited");
    await page.getByRole("button", { name: "Filter" }).click();
    await page.waitForURL(/action=user.invited/);
    // The URL changes before the filtered table replaces the old one: wait for the other actions to go.
    await page.locator('tbody tr:not([data-action="user.invited"])').first().waitFor({ state: "detached" });
    const actions = await page.locator("tbody tr").evaluateAll((rows) => rows.map((r) => r.getAttribute("data-action")));
    expect(actions.length).toBeGreaterThan(0);
    expect(new Set(actions)).toEqual(new Set(["user.invited"]));
    await page.screenshot({ path: artifactPath("admin-audit.png"), fullPage: true });
    await page.close();
  });
});

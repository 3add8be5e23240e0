import { mkdtempSync, mkdirSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext, type Locator } from "playwright-core";

// Debian's Chromium, headless, with the flags that keep it quiet on a closed network.
export async function launchBrowser(): Promise<BrowserContext> {
  const dir = mkdtempSync(path.join(os.tmpdir(), "bandledger-chromium-"));
  return chromium.launchPersistentContext(dir, {
    executablePath: process.env.CHROMIUM_PATH ?? "/usr/bin/chromium",
    headless: true,
    viewport: { width: 1280, height: 860 },
    args: ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking", "--disable-component-update", "--disable-sync"],
  });
}

export function artifactPath(name: string): string {
  mkdirSync("test-artifacts/screenshots", { recursive: true });
  return path.join("test-artifacts/screenshots", name);
}

// Waits until the locator shows, and fails the test when it has not within the timeout.
// `isVisible()` answers at once, so it races a render that follows a navigation.
export async function expectVisible(locator: Locator, timeout = 10_000): Promise<void> {
  await locator.waitFor({ state: "visible", timeout });
}

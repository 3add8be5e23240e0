import { mkdtempSync, mkdirSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { chromium, type BrowserContext } from "playwright-core";

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

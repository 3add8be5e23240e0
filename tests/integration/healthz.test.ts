import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { runMigrations } from "~/.server/db/migrate";
import { startSink, type Sink } from "~/.server/mail/sink";
import { startAppServer, type AppServer } from "../support/app-server";
import { ThrowawayMariadb } from "../support/mariadb";

const mdb = new ThrowawayMariadb();
let app: AppServer;
let sink: Sink;

beforeAll(async () => {
  await mdb.start();
  await runMigrations(mdb.url);
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-mail-"));
  sink = await startSink({ port: 0, dir: mailboxDir });
  app = await startAppServer({ databaseUrl: mdb.url, smtpPort: sink.port, mailboxDir });
});
afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await mdb.kill();
});

async function until(fn: () => Promise<boolean>, ms: number) {
  const end = Date.now() + ms;
  while (Date.now() < end) {
    if (await fn()) return true;
    await new Promise((r) => setTimeout(r, 100));
  }
  return false;
}

describe("/healthz and the database-unavailable page", () => {
  it("answers 200 with the database up", async () => {
    const r = await fetch(`${app.url}/healthz`);
    expect(r.status).toBe(200);
    expect(await r.json()).toMatchObject({ status: "ok", database: { status: "up" } });
  });

  it("answers 503 when the database is killed, and pages say so without a stack trace", async () => {
    await mdb.kill("SIGKILL");
    const r = await fetch(`${app.url}/healthz`);
    expect(r.status).toBe(503);
    expect(await r.json()).toMatchObject({ status: "degraded", database: { status: "down" } });
    await new Promise((r) => setTimeout(r, 1_100));
    const page = await fetch(`${app.url}/`);
    expect(page.status).toBe(503);
    const html = await page.text();
    expect(html).toContain("The database is unavailable");
    expect(html).not.toMatch(/at .*\.js:\d+/);
  });

  it("recovers without restarting the app once the database is back", async () => {
    await mdb.start();
    const recovered = await until(async () => (await fetch(`${app.url}/healthz`)).status === 200, 10_000);
    expect(recovered).toBe(true);
    expect(app.process.exitCode).toBeNull();
    const page = await fetch(`${app.url}/`);
    expect(page.status).toBe(200);
  });
});

import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { drizzle } from "drizzle-orm/mysql2";
import type { TestProject } from "vitest/node";
import { createPool } from "~/.server/db/client";
import * as schema from "~/.server/db/schema";
import { startSink } from "~/.server/mail/sink";
import { loadDemo } from "../../seed-data/load";
import { startAppServer } from "./app-server";
import { createTestDatabase } from "./db";

// Browser tests: one production server on a free port, over a fresh demo database and its own mail sink.
export default async function setup(project: TestProject) {
  const name = `bandledger_test_e2e_${process.pid}`;
  const { url, drop } = await createTestDatabase(name);
  const pool = createPool(url, 4);
  await loadDemo(drizzle(pool, { schema, mode: "default" }));
  await pool.end();
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bandledger-mailbox-"));
  const sink = await startSink({ port: 0, dir: mailboxDir });
  const server = await startAppServer({ databaseUrl: url, smtpPort: sink.port, mailboxDir });
  project.provide("appUrl", server.url);
  project.provide("mailboxDir", mailboxDir);
  project.provide("e2eDatabaseUrl", url);
  return async () => {
    await server.stop();
    await sink.close();
    await drop();
  };
}

declare module "vitest" {
  export interface ProvidedContext {
    appUrl: string;
    mailboxDir: string;
    e2eDatabaseUrl: string;
  }
}

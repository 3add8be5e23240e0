import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { eq } from "drizzle-orm";
import { apiTokens, users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { generateToken } from "~/.server/tokens";
import { loadDemo } from "../../seed-data/load";
import { TEAM_DOMAIN } from "../../seed-data/team";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { sessionCookieValue } from "../support/session";

export type DemoServer = {
  t: TestDatabase;
  server: AppServer;
  sink: Sink;
  mailboxDir: string;
  url: string;
  userId: (person: string) => Promise<number>;
  token: (person: string) => Promise<string>;
  cookie: (person: string) => Promise<string>;
  /** Stops the app and starts it again on the same port; `workers` changes the number of worker processes. */
  restart: (options?: { workers?: number }) => Promise<void>;
  close: () => Promise<void>;
};

// The production build over a fresh database holding the demo team, registry and sets, with its own mail sink.
export async function startDemoServer(label: string, extraEnv: Record<string, string> = {}): Promise<DemoServer> {
  const t = await freshDatabase(label);
  await loadDemo(t.db);
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), `bl-${label}-mail-`));
  const sink = await startSink({ port: 0, dir: mailboxDir });
  const start = () => startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv });
  const demo: DemoServer = {
    t, sink, mailboxDir,
    server: await start(),
    get url() {
      return demo.server.url;
    },
    async userId(person) {
      const [u] = await t.db.select({ id: users.id }).from(users).where(eq(users.email, `${person}@${TEAM_DOMAIN}`));
      if (!u) throw new Error(`no demo person ${person}`);
      return u.id;
    },
    async token(person) {
      const { token, prefix, hash } = generateToken();
      await t.db.insert(apiTokens).values({ userId: await demo.userId(person), name: `test ${person}`, tokenHash: hash, prefix });
      return token;
    },
    async cookie(person) {
      return `__bandledger=${await sessionCookieValue(await demo.userId(person), t.url)}`;
    },
    async restart(options = {}) {
      const port = demo.server.port;
      await demo.server.stop();
      demo.server = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv, port, workers: options.workers });
    },
    async close() {
      await demo.server.stop();
      await sink.close();
      await t.drop();
    },
  };
  return demo;
}

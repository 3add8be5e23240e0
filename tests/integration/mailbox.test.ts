import http from "node:http";
import { mkdtempSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { startSink, type Sink } from "~/.server/mail/sink";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";

// The local mailbox holds every sign-in code: it answers only a browser on this machine. A client bound to 127.0.0.2
// stands for another machine (the socket's peer is then 127.0.0.2, not this machine's own 127.0.0.1).

let t: TestDatabase;
let sink: Sink;
let mailboxDir: string;
let app: AppServer;
const FILE = "000001764633600000-1-000001.eml";

function getFrom(localAddress: string, url: string, headers: Record<string, string> = {}): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    http.get(url, { localAddress, headers }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => resolve({ status: res.statusCode ?? 0, body: Buffer.concat(chunks).toString("utf8") }));
    }).on("error", reject);
  });
}

beforeAll(async () => {
  t = await freshDatabase("mailbox");
  mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-mailbox-"));
  writeFileSync(path.join(mailboxDir, FILE), "X-Sink-Envelope-To: a@kestrel-devices.test\r\nFrom: ledger@bandledger.local\r\nTo: a@kestrel-devices.test\r\nSubject: Your sign-in code\r\n\r\n123456\r\n");
  sink = await startSink({ port: 0, dir: mailboxDir });
  // Even a proxy setting that trusts the foreign address does not open the mailbox to it.
  app = await startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { TRUST_PROXY: "127.0.0.2" } });
});
afterAll(async () => {
  await app?.stop();
  await sink?.close();
  await t?.drop();
});

describe("the local mailbox", () => {
  it("opens in a browser on this machine, without printing where its files are", async () => {
    const list = await getFrom("127.0.0.1", `${app.url}/dev/mailbox`);
    expect(list.status).toBe(200);
    expect(list.body).toContain("Your sign-in code");
    expect(list.body).not.toContain(mailboxDir);
    expect((await getFrom("127.0.0.1", `${app.url}/dev/mailbox/${FILE}`)).status).toBe(200);
  });

  it("refuses another machine with 403 and a reason, whatever X-Forwarded-For claims", async () => {
    for (const pathname of ["/dev/mailbox", `/dev/mailbox/${FILE}`]) {
      const foreign = await getFrom("127.0.0.2", app.url + pathname, { "x-forwarded-for": "127.0.0.1" });
      expect(foreign.status, pathname).toBe(403);
      expect(foreign.body).toContain("opens only in a browser on the machine that runs Bandledger");
      expect(foreign.body).not.toContain("123456");
    }
  });
});

import http from "node:http";
import { mkdtempSync, writeFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import type { RouteConfigEntry } from "@react-router/dev/routes";
import { afterAll, beforeAll, describe, expect, it } from "vitest";
import { users } from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import routes from "~/routes";
import { loadDemo } from "../../seed-data/load";
import { startAppServer, type AppServer } from "../support/app-server";
import { freshDatabase, type TestDatabase } from "../support/db";
import { CALLERS, expectedOutcome, HttpClient, outcomeOf, ROUTE_ACCESS, type Caller, type Fixtures } from "../support/route-access";

// React Router names a route by its file without the extension unless the config gives an id.
function routeIds(entries: RouteConfigEntry[]): string[] {
  return entries.flatMap((e) => [e.id ?? e.file.replace(/\.[cm]?[jt]sx?$/, ""), ...routeIds(e.children ?? [])]);
}

const ALL_IDS = routeIds(routes as RouteConfigEntry[]);
const COVERED = ALL_IDS.filter((id) => ROUTE_ACCESS[id]);

const DEMO_CALLERS: Record<Exclude<Caller, "anonymous">, string> = {
  reader: "priya.raman@kestrel-devices.test",
  contributor: "tomas.okafor@kestrel-devices.test",
  lead: "ravi.menon@kestrel-devices.test",
  admin: "ines.carvalho@kestrel-devices.test",
  deactivated: "jonas.weber@kestrel-devices.test",
};

let t: TestDatabase;
let sink: Sink;
let on: AppServer;
let off: AppServer;
let fixtures: Fixtures;
const userIds = new Map<string, number>();

beforeAll(async () => {
  t = await freshDatabase("authz");
  await loadDemo(t.db);
  for (const u of await t.db.select().from(users)) userIds.set(u.email, u.id);
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), "bl-authz-mail-"));
  fixtures = { mailFile: "000001764633600000-1-000001.eml" };
  writeFileSync(path.join(mailboxDir, fixtures.mailFile), "X-Sink-Envelope-To: a@kestrel-devices.test\r\nFrom: ledger@bandledger.local\r\nTo: a@kestrel-devices.test\r\nSubject: fixture\r\n\r\nHello\r\n");
  sink = await startSink({ port: 0, dir: mailboxDir });
  [on, off] = await Promise.all([
    startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir }),
    startAppServer({ databaseUrl: t.url, smtpPort: sink.port, mailboxDir, extraEnv: { BANDLEDGER_MAILBOX: "off" } }),
  ]);
});
afterAll(async () => {
  await Promise.all([on?.stop(), off?.stop()]);
  await sink?.close();
  await t?.drop();
});

async function callerClient(base: string, caller: Caller): Promise<HttpClient> {
  if (caller === "anonymous") return new HttpClient(base);
  return HttpClient.signedIn(base, userIds.get(DEMO_CALLERS[caller])!);
}

describe("authorisation matrix over app/routes.ts", () => {
  it("has an entry in tests/support/route-access.ts for every route (add one when you add a route)", () => {
    const missing = ALL_IDS.filter((id) => !ROUTE_ACCESS[id]);
    expect(missing, `routes without an access entry: ${missing.join(", ")}`).toEqual([]);
  });

  it("has no entries for routes that no longer exist", () => {
    expect(Object.keys(ROUTE_ACCESS).filter((id) => !ALL_IDS.includes(id))).toEqual([]);
  });

  it.each(COVERED)("%s: every caller gets what its access rule says", async (id) => {
    const entry = ROUTE_ACCESS[id];
    const got: string[] = [];
    const want: string[] = [];
    for (const [server, mailbox] of [[on, true], [off, false]] as const) {
      for (const caller of CALLERS) {
        for (const req of entry.requests) {
          const c = await callerClient(server.url, caller);
          const url = typeof req.path === "function" ? req.path(fixtures) : req.path;
          const response = await c.request(url, { method: req.method, form: req.form });
          const label = `${req.method} ${url} as ${caller}${mailbox ? "" : " (mailbox off)"}`;
          got.push(`${label}: ${outcomeOf(response)} (${response.status})`);
          want.push(`${label}: ${expectedOutcome(entry.access, caller, { mailbox })} (${response.status})`);
          await response.body?.cancel();
        }
      }
    }
    expect(got).toEqual(want);
  });

  // Another machine (a socket from 127.0.0.2) never reads the mailbox: 403 while it is on, 404 while it is off.
  it.each(COVERED.filter((id) => ROUTE_ACCESS[id].access === "dev-only"))("%s: another machine is refused", async (id) => {
    for (const [server, mailbox] of [[on, true], [off, false]] as const) {
      for (const req of ROUTE_ACCESS[id].requests) {
        const url = typeof req.path === "function" ? req.path(fixtures) : req.path;
        const status = await new Promise<number>((resolve, reject) => {
          http.get(server.url + url, { localAddress: "127.0.0.2" }, (res) => {
            res.resume();
            resolve(res.statusCode ?? 0);
          }).on("error", reject);
        });
        expect(status, `${url}${mailbox ? "" : " (mailbox off)"}`).toBe(mailbox ? 403 : 404);
      }
    }
  });
});

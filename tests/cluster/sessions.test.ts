import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { clusterDatabase, onNode, peopleIds, startTwoApps, type ClusterDatabase, type TwoApps } from "../support/cluster";
import { HttpClient } from "../support/route-access";

// Sessions live in the database, so they hold across app processes and nodes: a session written through node 1 is
// read through node 2, and whatever ends it (sign-out, deactivation) ends it on both at once (every read waits for
// the cluster's commits, wsrep_sync_wait = 1). The admin is the demo team's; the two readers are created here, so that
// their sessions and a deactivation touch no other test of the shared cluster database.

let c: ClusterDatabase;
let apps: TwoApps;
let ids: Record<string, number>;
let visitorId = 0;
let guestId = 0;

// The account page answers 200 to a live session and sends anyone else to sign in.
async function accountStatus(client: HttpClient): Promise<number> {
  return (await client.get("/account")).status;
}

beforeAll(async () => {
  c = clusterDatabase(inject("clusterDatabase"));
  ids = await peopleIds(c);
  apps = await startTwoApps(c, "sessions");
  const person = async (name: string) => {
    const email = `${name.toLowerCase().replace(" ", ".")}.${process.pid}@kestrel-devices.test`;
    await onNode(c, 1, "INSERT INTO users (email, name, role) VALUES (?, ?, 'reader')", [email, name]);
    return (await onNode<{ id: number }>(c, 2, "SELECT id FROM users WHERE email = ?", [email]))[0].id;
  };
  visitorId = await person("Visiting Reader");
  guestId = await person("Guest Reader");
});

afterAll(async () => {
  await apps?.stop();
  await c?.drop();
}, 600_000);

describe("sessions on the cluster", () => {
  it("a session started through one worker works through the other; sign-out there ends it everywhere, a copied cookie included", async () => {
    // Written on node 1 (app A's node), as sign-in through app A writes it.
    const onA = await HttpClient.signedIn(apps.a.url, guestId);
    const cookie = onA.cookies.get("__bandledger")!;
    const onB = new HttpClient(apps.b.url);
    onB.cookies.set("__bandledger", cookie);
    const copy = new HttpClient(apps.a.url);
    copy.cookies.set("__bandledger", cookie);
    expect(await accountStatus(onB)).toBe(200);
    expect(await accountStatus(copy)).toBe(200);
    // Signed out through app B, on node 2.
    const out = await onB.post("/sign-out", {});
    expect(out.status).toBe(302);
    expect(await accountStatus(onA)).toBe(302);
    expect(await accountStatus(copy)).toBe(302);
    for (const node of [1, 2, 3] as const) {
      const [row] = await onNode<{ n: number }>(c, node, "SELECT COUNT(*) AS n FROM sessions WHERE user_id = ?", [guestId]);
      expect(Number(row.n), `sessions of the signed-out person on node ${node}`).toBe(0);
    }
  });

  it("deactivation through one worker ends the person's session on the other at once", async () => {
    const visitorOnA = await HttpClient.signedIn(apps.a.url, visitorId);
    expect(await accountStatus(visitorOnA)).toBe(200);
    const adminOnB = await HttpClient.signedIn(apps.b.url, ids.ines);
    const [{ version }] = await onNode<{ version: number }>(c, 2, "SELECT version FROM users WHERE id = ?", [visitorId]);
    const r = await adminOnB.post("/admin/users", { intent: "deactivate", userId: String(visitorId), version: String(version) });
    expect(r.status).toBe(302);
    expect(await accountStatus(visitorOnA)).toBe(302);
    const [row] = await onNode<{ n: number }>(c, 3, "SELECT COUNT(*) AS n FROM sessions WHERE user_id = ?", [visitorId]);
    expect(Number(row.n)).toBe(0);
  });
});

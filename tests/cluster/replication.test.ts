import { execFileSync } from "node:child_process";
import { createHash } from "node:crypto";
import path from "node:path";
import mysql from "mysql2/promise";
import { afterAll, beforeAll, describe, expect, inject, it } from "vitest";
import { verifyReleaseText } from "~/domain/release-format";
import { NODES, clusterDatabase, onNode, peopleIds, settled, startTwoApps, type ClusterDatabase, type NodeNo, type TwoApps } from "../support/cluster";
import { alertText } from "../support/faults";
import { HttpClient } from "../support/route-access";

// The app on the cluster with nothing failing: a write through one node is read at once through the others, the
// runtime account cannot touch the append-only guards on any node, and a release is the same bytes from each app.
// The value proposed is GaAs a(300 K) = 5.65325 Å of [V01] (Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815
// (2001), from memory) with its last digits changed, only to tell it from the demo value.

let c: ClusterDatabase;
let apps: TwoApps;
let ids: Record<string, number>;
const on: Record<"a" | "b", Record<string, HttpClient>> = { a: {}, b: {} };
let recordId = 0;

beforeAll(async () => {
  c = clusterDatabase(inject("clusterDatabase"));
  ids = await peopleIds(c);
  apps = await startTwoApps(c, "repl");
  for (const who of ["ravi", "hanna", "tomas", "priya"]) {
    on.a[who] = await HttpClient.signedIn(apps.a.url, ids[who]);
    on.b[who] = await HttpClient.signedIn(apps.b.url, ids[who]);
  }
  const [r] = await onNode<{ id: number }>(c, 1,
    "SELECT r.id FROM records r JOIN materials m ON m.id = r.material_id JOIN quantities qu ON qu.id = r.quantity_id WHERE m.`key` = 'GaAs' AND qu.`key` = 'lattice_a' AND r.condition_key = 'T=300|V=|x='");
  recordId = r.id;
});

afterAll(async () => {
  await apps?.stop();
  await c?.drop();
});

async function propose(client: HttpClient, value: string, note: string): Promise<number> {
  const r = await client.post(`/proposals/new?record=${recordId}&kind=revision`, {
    intent: "submit", kind: "revision", recordId: String(recordId), material: "GaAs", quantity: "lattice_a", value, unit: "Å", method: "compilation",
    "source.kind": "doi", "source.doi": "10.1063/1.1368156", "source.title": "Band parameters for III–V compound semiconductors and their alloys",
    locator: "GaAs parameter table", notes: note,
  });
  const id = Number(/^\/proposals\/(\d+)$/.exec(r.headers.get("location") ?? "")?.[1]);
  if (r.status !== 302 || !id) throw new Error(`proposal not submitted: ${r.status} ${alertText(await r.text())}`);
  return id;
}

async function versionOf(proposalId: number, node: NodeNo = 1): Promise<number> {
  const [p] = await onNode<{ version: number }>(c, node, "SELECT version FROM proposals WHERE id = ?", [proposalId]);
  return p.version;
}

describe("the two app processes on the cluster", () => {
  it("use the node first in their own list and report a cluster of three", async () => {
    for (const [app, nodeName] of [[apps.a, "node1"], [apps.b, "node2"]] as const) {
      const r = await fetch(`${app.url}/healthz`);
      expect(r.status).toBe(200);
      expect(await r.json()).toMatchObject({ status: "ok", database: { status: "up", node: 1, nodes: 3, cluster: { nodeName, size: 3, state: "Synced", component: "Primary" } } });
    }
  });
});

describe("a value approved through node 1", () => {
  it("is read at once on nodes 2 and 3, and by the app on node 2 in the request after the redirect", async () => {
    const value = "5.65331";
    const id = await propose(on.a.tomas, value, "read after write");
    const approved = await on.a.ravi.post(`/proposals/${id}`, { intent: "approve", version: String(await versionOf(id)) });
    expect(approved.status, alertText(await approved.clone().text()) ?? "").toBe(302);
    // No wait of our own: the nodes' pools set wsrep_sync_wait = 1, so each read waits for what node 1 committed.
    const [page, ...rows] = await Promise.all([
      on.b.priya.get(`/records/${recordId}`),
      ...([2, 3] as const).map((n) => onNode<{ value: string; state: string }>(c, n,
        "SELECT rv.value, p.state FROM records r JOIN revisions rv ON rv.id = r.current_revision_id JOIN proposals p ON p.result_revision_id = rv.id WHERE r.id = ?", [recordId])),
    ]);
    for (const r of rows) expect(r).toEqual([{ value, state: "approved" }]);
    expect(page.status).toBe(200);
    expect(await page.text()).toContain(`${value} Å`);
  });

  it("is refused through node 2 to the lead who wrote it (four-eyes), whichever node holds the proposal", async () => {
    const id = await propose(on.a.ravi, "5.65332", "four eyes across nodes");
    const r = await on.b.ravi.post(`/proposals/${id}`, { intent: "approve", version: String(await versionOf(id, 2)) });
    expect(r.status).toBe(403);
    expect(alertText(await r.text())).toBe("You wrote this proposal: another lead of Arsenides or an admin decides it (four-eyes rule).");
    const [row] = await onNode<{ state: string }>(c, 3, "SELECT state FROM proposals WHERE id = ?", [id]);
    expect(row.state).toBe("submitted");
  });
});

describe("the append-only guards on every node", () => {
  const sock = (n: NodeNo) => path.join(process.env.BANDLEDGER_DATA_DIR ?? path.join(process.cwd(), ".data"), "cluster", "run", `n${n}.sock`);
  const refusals: [string, RegExp][] = [
    ["DROP TRIGGER revisions_no_update", /TRIGGER command denied|Access denied/],
    ["CREATE TRIGGER audit_log_quiet BEFORE INSERT ON audit_log FOR EACH ROW SET NEW.detail = NULL", /TRIGGER command denied|Access denied/],
    ["ALTER TABLE releases ADD COLUMN note TEXT", /ALTER command denied/],
    ["DROP TABLE audit_log", /DROP command denied/],
    ["UPDATE revisions SET notes = 'changed' LIMIT 1", /UPDATE command denied/],
    ["DELETE FROM audit_log LIMIT 1", /DELETE command denied/],
    ["UPDATE releases SET sha256 = REPEAT('0', 64) LIMIT 1", /UPDATE command denied/],
    ["DELETE FROM release_items LIMIT 1", /DELETE command denied/],
  ];

  it("refuse the runtime account every change to the triggers and the guarded tables, and fire for the schema's owner", async () => {
    for (const n of NODES) {
      for (const [statement, refused] of refusals) {
        await expect(onNode(c, n, statement), `node ${n}: ${statement}`).rejects.toThrow(refused);
      }
      // The triggers themselves exist on this node (read as root through its socket) and refuse even the owner.
      const names = execFileSync("mariadb", ["--no-defaults", "--protocol=socket", `--socket=${sock(n)}`, "-uroot", "-N", "-B", "-e",
        `SELECT trigger_name FROM information_schema.triggers WHERE trigger_schema = '${c.name}'`], { encoding: "utf8" }).trim().split("\n").sort();
      expect(names, `node ${n}`).toEqual([
        "audit_log_no_delete", "audit_log_no_update", "release_items_no_delete", "release_items_no_update",
        "releases_no_delete", "releases_no_update", "revisions_no_delete", "revisions_no_update",
      ]);
      const owner = await mysql.createConnection({ uri: execFileSync("bash", ["scripts/cluster.sh", "migrate-url", c.name, String(n)], { encoding: "utf8" }).trim() });
      try {
        await expect(owner.query("UPDATE revisions SET notes = 'changed' LIMIT 1"), `node ${n}`).rejects.toThrow("revisions are immutable");
        await expect(owner.query("DELETE FROM releases LIMIT 1"), `node ${n}`).rejects.toThrow("frozen releases are immutable");
        await expect(owner.query("UPDATE audit_log SET action = 'x' LIMIT 1"), `node ${n}`).rejects.toThrow("audit_log is append-only");
      } finally {
        await owner.end();
      }
    }
  });
});

describe("a release frozen through one app", () => {
  it("is byte-identical with the same hash downloaded from each app process, as JSON and as CSV", async () => {
    const made = await on.a.ravi.post("/sets/new", { name: "Cluster bytes", purpose: "Downloaded through both nodes" });
    expect(made.status).toBe(302);
    const slug = made.headers.get("location")!.split("/").pop()!;
    expect((await on.b.ravi.post(`/sets/${slug}`, { intent: "add-filter", family: "arsenides" })).status).toBe(302);
    const [{ version }] = await onNode<{ version: number }>(c, 2, "SELECT version FROM parameter_sets WHERE slug = ?", [slug]);
    const frozen = await on.a.hanna.post(`/sets/${slug}`, { intent: "freeze", confirm: "yes", expectedVersion: String(version) });
    expect(frozen.status, alertText(await frozen.clone().text()) ?? "").toBe(302);
    const number = Number(/\/releases\/(\d+)$/.exec(frozen.headers.get("location") ?? "")?.[1]);
    expect(number).toBe(1);
    const [stored] = await onNode<{ sha256: string; csv_sha256: string }>(c, 3, "SELECT r.sha256, r.csv_sha256 FROM releases r JOIN parameter_sets s ON s.id = r.set_id WHERE s.slug = ? AND r.number = 1", [slug]);
    for (const format of ["json", "csv"] as const) {
      const bodies = await Promise.all([on.a.priya, on.b.priya].map(async (client) => {
        const r = await client.get(`/sets/${slug}/releases/${number}.${format}`);
        expect(r.status).toBe(200);
        return Buffer.from(await r.arrayBuffer());
      }));
      expect(bodies[0].length).toBeGreaterThan(1000);
      expect(bodies[1].equals(bodies[0]), format).toBe(true);
      const hash = createHash("sha256").update(bodies[0]).digest("hex");
      if (format === "csv") expect(hash).toBe(stored.csv_sha256);
      else expect(await verifyReleaseText(bodies[0].toString("utf8"))).toMatchObject({ ok: true, sha256: stored.sha256 });
    }
    await settled(c);
  });
});

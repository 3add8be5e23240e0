import { execFile, execFileSync } from "node:child_process";
import { randomBytes } from "node:crypto";
import { mkdtempSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { promisify } from "node:util";
import { drizzle } from "drizzle-orm/mysql2";
import type mysql from "mysql2/promise";
import { createPool, type Db } from "~/.server/db/client";
import { createDatabase, dropDatabase, runMigrations } from "~/.server/db/migrate";
import * as schema from "~/.server/db/schema";
import { startSink, type Sink } from "~/.server/mail/sink";
import { startAppServer, type AppServer } from "./app-server";
import { tableChecksums } from "./checksums";

// The three-node Galera cluster of scripts/cluster.sh, as the cluster tests use it: a database of the test's own
// created and migrated through node 1 with the migration account, the runtime account's URL on every node, and
// production app processes each pointed at the nodes in its own order.

const run = promisify(execFile);
export const NODES = [1, 2, 3] as const;
export type NodeNo = (typeof NODES)[number];

/** Starts the cluster unless all three nodes are Synced (idempotent; a fresh machine installs and bootstraps). */
export function ensureCluster(): void {
  try {
    execFileSync("bash", ["scripts/cluster.sh", "status"], { stdio: "ignore" });
  } catch {
    execFileSync("bash", ["scripts/cluster.sh", "start"], { stdio: "inherit" });
  }
}

function script(...args: string[]): string {
  return execFileSync("bash", ["scripts/cluster.sh", ...args], { encoding: "utf8" }).trim();
}

/** `npm run cluster -- kill N` (SIGKILL), `restart N` or `start`; answers what the script printed. */
export async function clusterCommand(command: "kill" | "restart" | "start", node?: NodeNo): Promise<string> {
  const { stderr } = await run("bash", ["scripts/cluster.sh", command, ...(node ? [String(node)] : [])], { encoding: "utf8", timeout: 240_000 });
  return stderr.trim();
}

export type ClusterDatabase = {
  name: string;
  /** The runtime account's URL on node N (index N - 1). */
  urls: string[];
  /** One small pool per node as the runtime account, with reads that wait for the cluster (wsrep_sync_wait). */
  pools: mysql.Pool[];
  /** A drizzle client over node 1 for loading data. */
  db: Db;
  /** DATABASE_URLS for an app process: the nodes starting at `first`, then the others in order. */
  databaseUrls: (first: NodeNo) => string;
  /** Closes the pools (the project's teardown drops the database). */
  drop: () => Promise<void>;
};

/** A database of the cluster tests' own: created and migrated through node 1 (the DDL replicates in total order). */
export async function createClusterDatabase(label: string): Promise<string> {
  const name = `bandledger_test_cl_${label.replace(/[^a-z0-9]/gi, "").slice(0, 16)}_${randomBytes(3).toString("hex")}`;
  const migrateUrl = await createDatabase(script("migrate-url"), name);
  await runMigrations(migrateUrl, { user: "bandledger", host: "127.0.0.1" });
  return name;
}

export async function dropClusterDatabase(name: string): Promise<void> {
  await dropDatabase(script("migrate-url"), name);
}

/** The runtime account's view of an existing cluster test database, on every node. */
export function clusterDatabase(name: string): ClusterDatabase {
  const urls = NODES.map((n) => script("url", String(n), name));
  const pools = urls.map((u) => createPool(u, 4, { syncWait: true }));
  return {
    name, urls, pools,
    db: drizzle(pools[0], { schema, mode: "default" }),
    databaseUrls: (first) => [...urls.slice(first - 1), ...urls.slice(0, first - 1)].join(","),
    drop: async () => {
      await Promise.all(pools.map((p) => p.end().catch(() => undefined)));
    },
  };
}

/** A statement on node N as the runtime account (its pool waits for the cluster's commits before reading). */
export async function onNode<T = Record<string, unknown>>(db: ClusterDatabase, node: NodeNo, sql: string, params: unknown[] = []): Promise<T[]> {
  const [rows] = await db.pools[node - 1].query(sql, params);
  return rows as T[];
}

/** What node N says of itself and of the cluster. */
export async function nodeStatus(db: ClusterDatabase, node: NodeNo): Promise<{ size: number; state: string; lastCommitted: number }> {
  const rows = await onNode<{ Variable_name: string; Value: string }>(db, node, "SHOW GLOBAL STATUS WHERE Variable_name IN ('wsrep_cluster_size', 'wsrep_local_state_comment', 'wsrep_last_committed')");
  const s = Object.fromEntries(rows.map((r) => [r.Variable_name, r.Value]));
  return { size: Number(s.wsrep_cluster_size), state: s.wsrep_local_state_comment, lastCommitted: Number(s.wsrep_last_committed) };
}

/** Waits until every node is Synced in a cluster of three and all have applied the same last write set. */
export async function settled(db: ClusterDatabase, timeoutMs = 60_000): Promise<void> {
  const deadline = Date.now() + timeoutMs;
  for (;;) {
    try {
      const all = await Promise.all(NODES.map((n) => nodeStatus(db, n)));
      if (all.every((s) => s.size === 3 && s.state === "Synced") && new Set(all.map((s) => s.lastCommitted)).size === 1) return;
    } catch {
      /* a node is still coming back */
    }
    if (Date.now() > deadline) throw new Error("the cluster did not settle");
    await new Promise((r) => setTimeout(r, 200));
  }
}

/** CHECKSUM TABLE of every table on each node. */
export async function checksumsOnEveryNode(db: ClusterDatabase): Promise<Record<string, string>[]> {
  return Promise.all(db.pools.map((p) => tableChecksums(p, db.name)));
}

export type TwoApps = { a: AppServer; b: AppServer; sink: Sink; mailboxDir: string; stop: () => Promise<void> };

/**
 * Two production app processes (react-router-serve each) on one shared data folder and mail sink: A prefers node 1
 * (DATABASE_URLS 1,2,3), B node 2 (2,3,1).
 */
export async function startTwoApps(db: ClusterDatabase, label: string): Promise<TwoApps> {
  const mailboxDir = mkdtempSync(path.join(os.tmpdir(), `bl-${label}-mail-`));
  const dataDir = mkdtempSync(path.join(os.tmpdir(), `bl-${label}-data-`));
  const sink = await startSink({ port: 0, dir: mailboxDir });
  const start = (first: NodeNo) => startAppServer({
    databaseUrl: db.urls[first - 1], smtpPort: sink.port, mailboxDir,
    extraEnv: { DATABASE_URLS: db.databaseUrls(first), BANDLEDGER_DATA_DIR: dataDir, BANDLEDGER_API_RATE_PER_MINUTE: "100000" },
  });
  const [a, b] = await Promise.all([start(1), start(2)]);
  return {
    a, b, sink, mailboxDir,
    stop: async () => {
      await Promise.all([a.stop(), b.stop()]);
      await sink.close();
    },
  };
}

/** The ids of the demo people by the first part of their address (ravi, hanna, ines, tomas, mei, priya). */
export async function peopleIds(db: ClusterDatabase): Promise<Record<string, number>> {
  const rows = await onNode<{ id: number; email: string }>(db, 1, "SELECT id, email FROM users");
  return Object.fromEntries(rows.map((u) => [u.email.split(".")[0], u.id]));
}

import { AsyncLocalStorage } from "node:async_hooks";
import { data } from "react-router";
import { env } from "../env";
import { dropProbe, isNodeFailure, nodeInUse, pool, probeNode, reportNodeFailure } from "./client";

let lastOkAt = 0;

export type ClusterHealth = { nodeName: string; size: number; state: string; component: string };
export type DatabaseHealth =
  | { ok: true; latencyMs: number; node: { index: number; of: number }; cluster: ClusterHealth | null }
  | { ok: false; error: string; node: { index: number; of: number } };

// One round trip either way: on a cluster the node's own view of it, which also says whether it may be used.
const CLUSTER_STATUS = "SHOW GLOBAL STATUS WHERE Variable_name IN ('wsrep_cluster_size', 'wsrep_local_state_comment', 'wsrep_cluster_status', 'wsrep_ready')";

// The node's wsrep_node_name, asked once per node: it does not change while the node runs.
const nodeNames = new Map<number, string>();

async function nodeName(index: number): Promise<string> {
  const known = nodeNames.get(index);
  if (known !== undefined) return known;
  const rows = await probeNode("SHOW GLOBAL VARIABLES LIKE 'wsrep_node_name'");
  const name = (rows as { Value: string }[])[0]?.Value ?? "";
  if (nodeInUse().index === index) nodeNames.set(index, name);
  return name;
}

async function askNode(): Promise<ClusterHealth | null> {
  if (!env().cluster) {
    await pool().query("SELECT 1");
    return null;
  }
  // SHOW does not wait for the cluster (wsrep_sync_wait applies to reads of tables), so health answers during the
  // seconds after a node is lost in which the others hold their commits. It is asked on a connection of its own.
  const rows = await probeNode(CLUSTER_STATUS);
  const status = Object.fromEntries((rows as { Variable_name: string; Value: string }[]).map((r) => [r.Variable_name, r.Value]));
  if (status.wsrep_ready !== "ON") {
    // A node outside the primary component still answers SHOW and SELECT 1; tell the client to move on.
    throw Object.assign(new Error(`the node is not ready (${status.wsrep_cluster_status ?? "no cluster"}, ${status.wsrep_local_state_comment ?? "unknown state"})`), { errno: 1047, code: "WSREP_NOT_READY" });
  }
  return { nodeName: await nodeName(nodeInUse().index), size: Number(status.wsrep_cluster_size), state: status.wsrep_local_state_comment, component: status.wsrep_cluster_status };
}

export async function pingDatabase(timeoutMs = 1_500): Promise<DatabaseHealth> {
  const started = performance.now();
  const asked = nodeInUse().index;
  let timer: ReturnType<typeof setTimeout> | undefined;
  try {
    const cluster = await Promise.race([
      askNode().catch((e) => {
        // The pool moves on when a statement fails; a failure found by looking at the status must say so itself.
        if (isNodeFailure(e)) reportNodeFailure(asked, e);
        throw e;
      }),
      new Promise<never>((_, reject) => {
        timer = setTimeout(() => {
          if (env().cluster) dropProbe();
          reject(new Error("timed out"));
        }, timeoutMs);
      }),
    ]).finally(() => clearTimeout(timer));
    lastOkAt = Date.now();
    const { index, of } = nodeInUse();
    return { ok: true, latencyMs: Math.round((performance.now() - started) * 10) / 10, node: { index, of }, cluster };
  } catch (e) {
    lastOkAt = 0;
    const { index, of } = nodeInUse();
    return { ok: false, error: (e as { code?: string }).code ?? (e as Error).message, node: { index, of } };
  }
}

let pinging: Promise<DatabaseHealth> | null = null;

// Pages ask at most once a second while the database answers, so the check costs nothing under load; pages that
// ask at the same moment share one ping rather than queueing many behind each other.
export async function databaseAvailable(): Promise<boolean> {
  if (Date.now() - lastOkAt < 1_000) return true;
  pinging ??= pingDatabase().finally(() => (pinging = null));
  return (await pinging).ok;
}

export function markDatabaseSuspect() {
  lastOkAt = 0;
  const request = lostDatabase.getStore();
  if (request) request.lost = true;
}

// Per request: whether a loader or action lost the database on the way (handleError calls markDatabaseSuspect).
const lostDatabase = new AsyncLocalStorage<{ lost: boolean }>();

/**
 * Root middleware: an action or loader that failed because the database went away while it ran answers 503 with
 * the root's "database unavailable" page, as pages that find it gone beforehand do, not a 500 "our fault".
 */
export async function databaseLossAs503<T extends Response>(next: () => Promise<T>): Promise<T> {
  const request = { lost: false };
  const response = await lostDatabase.run(request, next);
  if (request.lost && response.status === 500) {
    await response.body?.cancel().catch(() => undefined);
    throw data({ code: "database_unavailable" }, { status: 503, statusText: "Database unavailable" });
  }
  return response;
}

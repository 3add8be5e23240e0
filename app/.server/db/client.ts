import { drizzle, type MySql2Database } from "drizzle-orm/mysql2";
import mysql from "mysql2/promise";
import { env } from "../env";
import * as schema from "./schema";

export type Db = MySql2Database<typeof schema>;

/**
 * The database client. With one URL it is a pool on that server. With DATABASE_URLS (the nodes of a Galera
 * cluster) it is a pool on one node at a time: the first URL while it answers; when a statement or a connection
 * fails because the node is gone or has left the cluster's primary component, the client moves on to the next URL
 * in the list, and comes back to the first once that node is Synced again. Each process (and each worker) does
 * this on its own, so nothing here is shared between processes.
 */
type Node = { index: number; url: string; label: string; pool: mysql.Pool | null };
type Holder = { nodes: NodeSet; facade: mysql.Pool; db: Db };
const globalKey = Symbol.for("bandledger.db");
const g = globalThis as unknown as { [globalKey]?: Holder };

export function createPool(url: string, connectionLimit = 20, options: { syncWait?: boolean } = {}): mysql.Pool {
  const pool = mysql.createPool({
    uri: url,
    connectionLimit,
    // Fifty requests at once on an idle pool open twenty connections together; on a loaded two-core machine their
    // handshakes took more than 2 s, and those requests failed with ETIMEDOUT although the database was up. A gone
    // database refuses at once (ECONNREFUSED) whatever this says, and a node that hangs is found in 2 s by the
    // health probe's own connection (below), which moves the pool to the next node.
    connectTimeout: 8_000,
    enableKeepAlive: true,
    dateStrings: false,
    timezone: "Z",
    decimalNumbers: false,
    supportBigNumbers: true,
    bigNumberStrings: true,
  });
  if (options.syncWait) {
    // On a cluster a read must see what any node has committed before it (a decision made through another node,
    // the page after a redirect served by another process): wsrep_sync_wait = 1 makes each read wait for that.
    pool.pool.on("connection", (connection) => {
      connection.query("SET SESSION wsrep_sync_wait = 1", (error: unknown) => {
        if (error) console.error(`bandledger: could not set wsrep_sync_wait: ${(error as Error).message}`);
      });
    });
  }
  return pool;
}

function labelOf(url: string): string {
  try {
    const u = new URL(url);
    return `${u.hostname}:${u.port || "3306"}`;
  } catch {
    return "database";
  }
}

const FAILBACK_EVERY_MS = 5_000;

class NodeSet {
  readonly nodes: Node[];
  current = 0;
  switches = 0;
  private closing = false;
  private failback: ReturnType<typeof setInterval> | null = null;

  constructor(urls: string[], readonly cluster: boolean) {
    this.nodes = urls.map((url, index) => ({ index, url, label: labelOf(url), pool: null }));
  }

  pool(index = this.current): mysql.Pool {
    const node = this.nodes[index];
    node.pool ??= createPool(node.url, 20, { syncWait: this.cluster });
    return node.pool;
  }

  /** The node at `index` failed as a node (gone, or out of the primary component): use the next one from now on. */
  failed(index: number, error: unknown): void {
    if (this.nodes.length < 2 || index !== this.current || this.closing) return;
    const next = (index + 1) % this.nodes.length;
    this.current = next;
    this.switches++;
    console.error(`bandledger: database node ${this.nodes[index].label} failed (${describe(error)}); using ${this.nodes[next].label}`);
    if (next !== 0) this.watchFirst();
  }

  /** While another node serves, check every few seconds whether the first one is Synced again, and go back to it. */
  private watchFirst(): void {
    if (this.failback) return;
    this.failback = setInterval(() => {
      if (this.current === 0) return this.stopWatching();
      void nodeReady(this.nodes[0].url).then((ready) => {
        if (!ready || this.current === 0) return;
        console.error(`bandledger: database node ${this.nodes[0].label} is back in the cluster; using it again`);
        this.current = 0;
        this.stopWatching();
      });
    }, FAILBACK_EVERY_MS);
    this.failback.unref();
  }

  private stopWatching(): void {
    if (this.failback) clearInterval(this.failback);
    this.failback = null;
  }

  private probeConnection: { index: number; connection: Promise<mysql.Connection> } | null = null;

  /**
   * A statement on a connection of its own to the node in use, outside the pool: what the health check asks, so
   * that a pool whose connections are all held by long transactions is not taken for a node that stopped answering.
   */
  async probe(statement: string): Promise<unknown> {
    for (let attempt = 1; ; attempt++) {
      const index = this.current;
      if (this.probeConnection?.index !== index) {
        this.dropProbe();
        const connection = mysql.createConnection({ uri: this.nodes[index].url, connectTimeout: 2_000 });
        connection.catch(() => undefined);
        this.probeConnection = { index, connection };
      }
      const probe = this.probeConnection;
      try {
        const [rows] = await (await probe.connection).query(statement);
        return rows;
      } catch (e) {
        if (this.probeConnection === probe) this.dropProbe();
        if (!isNodeFailure(e)) throw e;
        this.failed(index, e);
        if (attempt >= this.nodes.length || this.nodes.length < 2) throw e;
      }
    }
  }

  /** Closes the probe connection (after an error, a timeout or a switch of node); the next probe opens another. */
  dropProbe(): void {
    const old = this.probeConnection;
    this.probeConnection = null;
    void old?.connection.then((c) => c.destroy(), () => undefined);
  }

  async end(): Promise<void> {
    // Statements cut off by the closing pools are not failures of their nodes.
    this.closing = true;
    this.dropProbe();
    this.stopWatching();
    await Promise.all(this.nodes.map((n) => n.pool?.end().catch(() => undefined)));
  }

  /** What the pool users see: query and execute on the current node, connections for transactions likewise. */
  facade(): mysql.Pool {
    const run = async <T>(call: (pool: mysql.Pool) => Promise<T>, read: boolean): Promise<T> => {
      for (let attempt = 1; ; attempt++) {
        const index = this.current;
        try {
          return await call(this.pool(index));
        } catch (e) {
          if (!isNodeFailure(e)) throw e;
          this.failed(index, e);
          // A read is repeated on the next node; a write only when the node refused it before doing anything.
          if (attempt < this.nodes.length && this.nodes.length > 1 && (read || refusedBeforeRunning(e))) continue;
          throw e;
        }
      }
    };
    const getConnection = async (): Promise<mysql.PoolConnection> => {
      for (let attempt = 1; ; attempt++) {
        const index = this.current;
        try {
          return watchConnection(await this.pool(index).getConnection(), (e) => this.failed(index, e));
        } catch (e) {
          if (!isNodeFailure(e)) throw e;
          this.failed(index, e);
          if (attempt < this.nodes.length && this.nodes.length > 1) continue;
          throw e;
        }
      }
    };
    const facade = {
      query: (...args: unknown[]) => run((p) => (p.query as (...a: unknown[]) => Promise<unknown>)(...args), isRead(args[0])),
      execute: (...args: unknown[]) => run((p) => (p.execute as (...a: unknown[]) => Promise<unknown>)(...args), isRead(args[0])),
      getConnection,
      end: () => this.end(),
    };
    return facade as unknown as mysql.Pool;
  }
}

/** A transaction's connection: a failure of its node makes the pool move on, the error still reaches the caller. */
function watchConnection(connection: mysql.PoolConnection, onNodeFailure: (e: unknown) => void): mysql.PoolConnection {
  const wrap = (name: "query" | "execute") => async (...args: unknown[]) => {
    try {
      return await (connection[name] as (...a: unknown[]) => Promise<unknown>).apply(connection, args);
    } catch (e) {
      if (isNodeFailure(e)) onNodeFailure(e);
      throw e;
    }
  };
  const query = wrap("query");
  const execute = wrap("execute");
  return new Proxy(connection, {
    get(target, prop, receiver) {
      if (prop === "query") return query;
      if (prop === "execute") return execute;
      const value = Reflect.get(target, prop, receiver);
      return typeof value === "function" ? value.bind(target) : value;
    },
  });
}

function isRead(statement: unknown): boolean {
  const text = typeof statement === "string" ? statement : (statement as { sql?: string } | null)?.sql ?? "";
  return /^\s*(select|show|with)\b/i.test(text) && !/\bfor\s+update\b/i.test(text);
}

/** Whether a Galera node answers for application use: in the primary component and Synced. */
async function nodeReady(url: string): Promise<boolean> {
  let connection: mysql.Connection | null = null;
  try {
    connection = await mysql.createConnection({ uri: url, connectTimeout: 1_000 });
    const [rows] = await connection.query("SHOW GLOBAL STATUS WHERE Variable_name IN ('wsrep_ready', 'wsrep_local_state_comment')");
    const status = Object.fromEntries((rows as { Variable_name: string; Value: string }[]).map((r) => [r.Variable_name, r.Value]));
    return status.wsrep_ready === "ON" && status.wsrep_local_state_comment === "Synced";
  } catch {
    return false;
  } finally {
    await connection?.end().catch(() => undefined);
  }
}

// ---- errors ----------------------------------------------------------------------------------------------------

function errorsOf(error: unknown): { code?: string; errno?: number; fatal?: boolean; message?: string }[] {
  const out: { code?: string; errno?: number; fatal?: boolean; message?: string }[] = [];
  for (let e: unknown = error, i = 0; e && i < 5; i++, e = (e as { cause?: unknown }).cause) out.push(e as never);
  return out;
}

const CONNECTION_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "PROTOCOL_CONNECTION_LOST", "ETIMEDOUT", "EPIPE", "ENOTFOUND", "EHOSTUNREACH", "ER_SERVER_SHUTDOWN"]);
const REFUSED_CODES = new Set(["ECONNREFUSED", "ENOTFOUND", "EHOSTUNREACH"]);
// 1047: WSREP has not yet prepared node for application use (a node outside the primary component, or joining).
// 1053: server shutdown in progress. 1180: the commit could not be replicated (the node lost the cluster meanwhile).
const NODE_ERRNOS = new Set([1047, 1053, 1180]);

/** The node itself failed (gone, shutting down, or out of the cluster's primary component), not the statement. */
export function isNodeFailure(error: unknown): boolean {
  return errorsOf(error).some((e) => (e.code && CONNECTION_CODES.has(e.code)) || (e.errno !== undefined && NODE_ERRNOS.has(e.errno)) || e.fatal === true);
}

/** The node refused before running anything: a new connection was refused, or the node said it is not ready. */
function refusedBeforeRunning(error: unknown): boolean {
  return errorsOf(error).some((e) => (e.code && REFUSED_CODES.has(e.code)) || e.errno === 1047 || e.errno === 1053);
}

/**
 * The transaction was rolled back as a whole and may be run again: a deadlock, or on a cluster a write set that
 * lost certification to a conflicting one committed through another node (both 1213), or a commit the node could
 * not replicate (1180, 1047). A connection lost during COMMIT is not among them: it may have committed.
 */
function rolledBackAsAWhole(error: unknown): boolean {
  return errorsOf(error).some((e) => e.errno === 1213 || e.errno === 1180 || e.errno === 1047);
}

/** Answers 503 "database unavailable" rather than 500: the database (or the node in use) could not do the work now. */
export function isDatabaseDown(error: unknown): boolean {
  return isNodeFailure(error) || errorsOf(error).some((e) => e.code === "ER_CON_COUNT_ERROR" || e.errno === 1213);
}

function describe(error: unknown): string {
  const e = errorsOf(error).find((x) => x.code || x.errno) ?? errorsOf(error)[0];
  return e ? [e.code, e.errno, e.message].filter(Boolean).join(" ").slice(0, 160) : "unknown error";
}

// ---- transactions ----------------------------------------------------------------------------------------------

// Fifty decisions at once on one proposal, spread over two nodes, lose certification to each other in rounds: each
// round one commits and the rest run again. Eight attempts with a growing, random pause (at most about 1.6 s in
// all) let every loser see the winner and answer its own 409, rather than a 503 after the fourth round.
const TRANSACTION_ATTEMPTS = 8;
const RETRY_PAUSE_CAP_MS = 500;

/**
 * db().transaction runs the body again, up to eight times in all, when the whole transaction was rolled back by the
 * database (see rolledBackAsAWhole) or its node failed before COMMIT was sent; the node-failure case runs on the
 * next node. The body must therefore keep to the database, or to effects that are safe to repeat (a notice mailed
 * inside its row lock is mailed at least once either way). After the last attempt the error goes to the caller.
 */
function retryingTransactions(d: Db): Db {
  const once = d.transaction.bind(d);
  const retrying: Db["transaction"] = async (body, config) => {
    for (let attempt = 1; ; attempt++) {
      let entered = false;
      let bodyError: unknown;
      try {
        return await once(async (tx) => {
          entered = true;
          try {
            return await body(tx);
          } catch (e) {
            bodyError = e;
            throw e;
          }
        }, config);
      } catch (e) {
        // When the connection died, the ROLLBACK fails too and its error hides the one that mattered.
        const cause = bodyError ?? e;
        const beforeCommit = !entered || bodyError !== undefined;
        const again = rolledBackAsAWhole(cause) || (beforeCommit && isNodeFailure(cause));
        if (!again || attempt >= TRANSACTION_ATTEMPTS) throw cause;
        await new Promise((r) => setTimeout(r, 5 + Math.random() * Math.min(RETRY_PAUSE_CAP_MS, 20 * 2 ** (attempt - 1))));
      }
    }
  };
  d.transaction = retrying;
  return d;
}

// ---- the process's client ----------------------------------------------------------------------------------------

function holder(): Holder {
  if (!g[globalKey]) {
    const e = env();
    const nodes = new NodeSet(e.databaseUrls, e.cluster);
    const facade = nodes.facade();
    g[globalKey] = { nodes, facade, db: retryingTransactions(drizzle(facade, { schema, mode: "default" })) };
    installShutdown();
  }
  return g[globalKey]!;
}

export function db(): Db {
  return holder().db;
}

/** The pool of the node in use (for hand-written SQL); it follows the node switches like db(). */
export function pool(): mysql.Pool {
  return holder().facade;
}

export type NodeInUse = { index: number; of: number; label: string; switches: number };

/** Which of the configured databases this process uses now (1-based, in the order of DATABASE_URLS). */
export function nodeInUse(): NodeInUse {
  const { nodes } = holder();
  return { index: nodes.current + 1, of: nodes.nodes.length, label: nodes.nodes[nodes.current].label, switches: nodes.switches };
}

/** The health check's statement on the node in use, on its own connection (see NodeSet.probe). */
export function probeNode(statement: string): Promise<unknown> {
  return holder().nodes.probe(statement);
}

/** Gives up the health check's connection, after it did not answer in time. */
export function dropProbe(): void {
  holder().nodes.dropProbe();
}

/** A failure of node `index` (1-based) found outside the pool, such as a status saying it left the cluster. */
export function reportNodeFailure(index: number, error: unknown): void {
  holder().nodes.failed(index - 1, error);
}

export async function closeDb(): Promise<void> {
  const h = g[globalKey];
  g[globalKey] = undefined;
  if (h) await h.nodes.end();
}

let shutdownInstalled = false;
// An open pool keeps the process alive after the HTTP server closes. A worker of the production server
// (server/worker.js) first lets the requests under way finish, then emits "bandledger:http-closed".
function installShutdown() {
  if (shutdownInstalled || process.env.VITEST) return;
  shutdownInstalled = true;
  const events = process.env.BANDLEDGER_CLUSTER_WORKER === "1" ? ["bandledger:http-closed"] : ["SIGTERM", "SIGINT"];
  for (const event of events) {
    process.once(event, () => {
      void closeDb().finally(() => process.exit(0));
    });
  }
}

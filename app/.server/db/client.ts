import { drizzle, type MySql2Database } from "drizzle-orm/mysql2";
import mysql from "mysql2/promise";
import { env } from "../env";
import * as schema from "./schema";

export type Db = MySql2Database<typeof schema>;

type Holder = { pool: mysql.Pool; db: Db };
const globalKey = Symbol.for("bandledger.db");
const g = globalThis as unknown as { [globalKey]?: Holder };

export function createPool(url: string, connectionLimit = 20): mysql.Pool {
  return mysql.createPool({
    uri: url,
    connectionLimit,
    connectTimeout: 2_000,
    enableKeepAlive: true,
    dateStrings: false,
    timezone: "Z",
    decimalNumbers: false,
    supportBigNumbers: true,
    bigNumberStrings: true,
  });
}

function holder(): Holder {
  if (!g[globalKey]) {
    const pool = createPool(env().databaseUrl);
    g[globalKey] = { pool, db: drizzle(pool, { schema, mode: "default" }) };
    installShutdown();
  }
  return g[globalKey]!;
}

export function db(): Db {
  return holder().db;
}

export function pool(): mysql.Pool {
  return holder().pool;
}

export async function closeDb(): Promise<void> {
  const h = g[globalKey];
  g[globalKey] = undefined;
  if (h) await h.pool.end().catch(() => undefined);
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

const DOWN_CODES = new Set(["ECONNREFUSED", "ECONNRESET", "PROTOCOL_CONNECTION_LOST", "ETIMEDOUT", "EPIPE", "ER_CON_COUNT_ERROR", "ENOTFOUND", "ER_SERVER_SHUTDOWN"]);

export function isDatabaseDown(error: unknown): boolean {
  let e: unknown = error;
  for (let i = 0; i < 4 && e; i++) {
    const code = (e as { code?: string }).code;
    if (code && DOWN_CODES.has(code)) return true;
    if ((e as { errno?: number }).errno === 1053) return true;
    e = (e as { cause?: unknown }).cause;
  }
  return false;
}

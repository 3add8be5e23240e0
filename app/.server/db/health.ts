import { AsyncLocalStorage } from "node:async_hooks";
import { data } from "react-router";
import { pool } from "./client";

let lastOkAt = 0;

export async function pingDatabase(timeoutMs = 1_500): Promise<{ ok: true; latencyMs: number } | { ok: false; error: string }> {
  const started = performance.now();
  try {
    await Promise.race([
      pool().query("SELECT 1"),
      new Promise((_, reject) => setTimeout(() => reject(new Error("timed out")), timeoutMs)),
    ]);
    lastOkAt = Date.now();
    return { ok: true, latencyMs: Math.round((performance.now() - started) * 10) / 10 };
  } catch (e) {
    lastOkAt = 0;
    return { ok: false, error: (e as { code?: string }).code ?? (e as Error).message };
  }
}

// Pages ask at most once a second while the database answers, so the check costs nothing under load.
export async function databaseAvailable(): Promise<boolean> {
  if (Date.now() - lastOkAt < 1_000) return true;
  return (await pingDatabase()).ok;
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

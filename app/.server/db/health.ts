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
}

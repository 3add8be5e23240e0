import os from "node:os";

/** How many worker processes serve: BANDLEDGER_WORKERS, else one per CPU core the process may use. */
export function workerCount(raw: string | undefined = process.env.BANDLEDGER_WORKERS): number {
  if (raw === undefined || raw.trim() === "") return Math.max(1, os.availableParallelism());
  const n = Number(raw);
  if (!Number.isInteger(n) || n < 1 || n > 256) throw new Error(`BANDLEDGER_WORKERS must be a whole number from 1 to 256 (got "${raw}")`);
  return n;
}

/** PORT (default 3000) and HOST (default: every interface, as react-router-serve listens). */
export function listenAddress(env: NodeJS.ProcessEnv = process.env): { port: number; host: string | undefined } {
  const raw = env.PORT ?? "3000";
  const port = Number(raw);
  if (!Number.isInteger(port) || port < 0 || port > 65535) throw new Error(`PORT must be a port number (got "${raw}")`);
  return { port, host: env.HOST || undefined };
}

/** One line on stderr with the time, the process's part and what happened; the request log stays on stdout. */
export function say(who: string, message: string): void {
  process.stderr.write(`${new Date().toISOString()} bandledger ${who}: ${message}\n`);
}

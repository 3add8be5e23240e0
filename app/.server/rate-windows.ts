import cluster, { type Cluster } from "node:cluster";

// Fixed-window counters in memory, shared by every app process of one server. When the app runs as several
// workers (server/main.ts), a hit is counted by the cluster's primary process over the IPC channel, so a limit of
// L a minute allows L across all workers, not L per worker. Anywhere else (one process, `react-router dev`, tests
// of the module) the windows live in this process. Pure Node: the primary imports this file without the app.

export type WindowCount = { count: number; secondsLeft: number };

/** The windows of one process: a bucket's count restarts once its window has run out. */
export class FixedWindows {
  private readonly windows = new Map<string, { startedAt: number; count: number }>();

  hit(bucket: string, windowSeconds: number, now: number): WindowCount {
    const length = windowSeconds * 1000;
    let w = this.windows.get(bucket);
    if (!w || now - w.startedAt >= length) {
      if (this.windows.size > 10_000) for (const [k, v] of this.windows) if (now - v.startedAt >= length) this.windows.delete(k);
      w = { startedAt: now, count: 0 };
      this.windows.set(bucket, w);
    }
    w.count += 1;
    return { count: w.count, secondsLeft: Math.max(1, Math.ceil((w.startedAt + length - now) / 1000)) };
  }
}

const MESSAGE = "bandledger:rate-window";
/** Set by server/main.ts in the environment of each worker it forks: the primary answers rate-window hits. */
export const CLUSTER_WORKER_ENV = "BANDLEDGER_CLUSTER_WORKER";
// A primary that does not answer within this time is gone (the worker is about to exit with it): count locally.
const ANSWER_TIMEOUT_MS = 1_000;

type HitRequest = { type: typeof MESSAGE; id: number; bucket: string; windowSeconds: number; now: number };
type HitAnswer = { type: typeof MESSAGE; id: number } & WindowCount;

const local = new FixedWindows();
const waiting = new Map<number, (answer: WindowCount) => void>();
let nextId = 1;
let answersHeard = false;

function viaPrimary(): boolean {
  return cluster.isWorker && process.env[CLUSTER_WORKER_ENV] === "1" && typeof process.send === "function" && process.connected;
}

function hearAnswers(): void {
  if (answersHeard) return;
  answersHeard = true;
  process.on("message", (message: unknown) => {
    const m = message as Partial<HitAnswer> | null;
    if (!m || m.type !== MESSAGE || typeof m.id !== "number") return;
    const resolve = waiting.get(m.id);
    if (!resolve) return;
    waiting.delete(m.id);
    resolve({ count: Number(m.count), secondsLeft: Number(m.secondsLeft) });
  });
}

/** Counts one hit of `bucket` in its window of `windowSeconds` and answers the count so far, this hit included. */
export function countWindowHit(bucket: string, windowSeconds: number, now = Date.now()): Promise<WindowCount> {
  if (!viaPrimary()) return Promise.resolve(local.hit(bucket, windowSeconds, now));
  hearAnswers();
  return new Promise<WindowCount>((resolve) => {
    const id = nextId++;
    const fallBack = () => {
      if (!waiting.delete(id)) return;
      resolve(local.hit(bucket, windowSeconds, now));
    };
    const timer = setTimeout(fallBack, ANSWER_TIMEOUT_MS);
    timer.unref();
    waiting.set(id, (answer) => {
      clearTimeout(timer);
      resolve(answer);
    });
    const request: HitRequest = { type: MESSAGE, id, bucket, windowSeconds, now };
    process.send!(request, undefined, undefined, (error) => {
      if (error) {
        clearTimeout(timer);
        fallBack();
      }
    });
  });
}

/** In the cluster's primary: answer the workers' hits from one set of windows. */
export function answerRateWindowHits(c: Cluster = cluster): void {
  const windows = new FixedWindows();
  c.on("message", (worker, message: unknown) => {
    const m = message as Partial<HitRequest> | null;
    if (!m || m.type !== MESSAGE || typeof m.id !== "number" || typeof m.bucket !== "string") return;
    const answer: HitAnswer = { type: MESSAGE, id: m.id, ...windows.hit(m.bucket, Number(m.windowSeconds), Number(m.now)) };
    if (worker.isConnected()) worker.send(answer);
  });
}

import { data } from "react-router";
import { env } from "../env";
import { countHitInProcess } from "../rate-limit";

// The central-equation solves are CPU work a caller chooses the size of (within the plane-wave cap), so each
// person has a per-minute budget of them whatever token or page asks (counted by the cluster's primary, so it holds
// across worker processes), and each worker process takes only so many check requests at once; the rest are told to
// come back instead of queueing behind the CPU.

const WINDOW_SECONDS = 60;
let inFlight = 0;

export type SolveRefusal = { status: 429 | 503; message: string; retryAfterSeconds: number };

export class SolveRefused extends Error {
  constructor(readonly refusal: SolveRefusal) {
    super(refusal.message);
  }
}

/** Runs one check request's solves for `userId`, or throws SolveRefused (429 past the user's budget, 503 when the process is full). */
export async function guardSolve<T>(userId: number, run: () => T | Promise<T>): Promise<T> {
  const limit = env().BANDLEDGER_CHECK_RATE_PER_MINUTE;
  const { count, secondsLeft } = await countHitInProcess(`solve:user:${userId}`, WINDOW_SECONDS);
  if (count > limit) {
    throw new SolveRefused({ status: 429, retryAfterSeconds: secondsLeft, message: `More than ${limit} physics checks a minute from your account (all its tokens and pages together); try again in ${secondsLeft} s.` });
  }
  if (inFlight >= env().BANDLEDGER_CHECK_CONCURRENCY) {
    throw new SolveRefused({ status: 503, retryAfterSeconds: 1, message: "The server is busy with other checks; try again in a second." });
  }
  inFlight += 1;
  try {
    return await run();
  } finally {
    inFlight -= 1;
  }
}

export function isSolveRefused(e: unknown): e is SolveRefused {
  return e instanceof SolveRefused;
}

/** For pages and the check-report route: the refusal as our own error page or JSON answer, with Retry-After. */
export async function guardSolveOrRespond<T>(userId: number, run: () => T | Promise<T>, as: "page" | "json"): Promise<T> {
  try {
    return await guardSolve(userId, run);
  } catch (e) {
    if (!isSolveRefused(e)) throw e;
    const { status, message, retryAfterSeconds } = e.refusal;
    const headers = { "Retry-After": String(retryAfterSeconds), "Cache-Control": "no-store" };
    if (as === "json") throw Response.json({ report: null, message }, { status, headers });
    throw data({ message }, { status, statusText: status === 429 ? "Too many checks" : "Busy", headers });
  }
}

import { randomBytes } from "node:crypto";
import { readFileSync } from "node:fs";
import http from "node:http";
import mysql from "mysql2/promise";
import type { AppServer } from "./app-server";
import type { HttpClient } from "./route-access";

// Shared pieces of the fault and race tests: raw multipart bodies, slow uploads, hard kills and dirty reads.

export type Answer = { status: number; location: string | null; text: string; ms: number };

/** A response read to the end, with how long the whole exchange took. */
export async function answerOf(response: Promise<Response>): Promise<Answer> {
  const started = performance.now();
  const r = await response;
  const text = await r.text();
  return { status: r.status, location: r.headers.get("location"), text, ms: Math.round(performance.now() - started) };
}

/** The message of a refused form as the page renders it (React escapes quotes and ampersands). */
export function unescapeHtml(html: string): string {
  return html.replace(/<!-- -->/g, "").replace(/&quot;/g, '"').replace(/&#x27;/g, "'").replace(/&#39;/g, "'").replace(/&lt;/g, "<").replace(/&gt;/g, ">").replace(/&amp;/g, "&");
}

/** The text of the page's role="alert" box of a refused action, or null. */
export function alertText(html: string): string | null {
  const m = /<p role="alert"[^>]*>([\s\S]*?)<\/p>/.exec(html);
  return m ? unescapeHtml(m[1]) : null;
}

/** Starts every request at the same moment: the thunks run only after all have been created. */
export async function allAtOnce<T>(thunks: (() => Promise<T>)[]): Promise<PromiseSettledResult<T>[]> {
  let go!: () => void;
  const gate = new Promise<void>((r) => (go = r));
  const running = thunks.map((t) => gate.then(t));
  go();
  return Promise.allSettled(running);
}

export function fulfilled<T>(results: PromiseSettledResult<T>[]): T[] {
  const failed = results.filter((r): r is PromiseRejectedResult => r.status === "rejected");
  if (failed.length) throw new Error(`${failed.length} requests failed outright: ${String(failed[0].reason)}`);
  return results.map((r) => (r as PromiseFulfilledResult<T>).value);
}

export async function sleep(ms: number): Promise<void> {
  await new Promise((r) => setTimeout(r, ms));
}

/** Polls until the check answers a truthy value or the time runs out. */
export async function waitFor<T>(check: () => Promise<T> | T, options: { timeoutMs: number; everyMs?: number; what: string }): Promise<NonNullable<T>> {
  const deadline = Date.now() + options.timeoutMs;
  for (;;) {
    let value: T | undefined;
    try {
      value = await check();
    } catch {
      value = undefined;
    }
    if (value) return value as NonNullable<T>;
    if (Date.now() > deadline) throw new Error(`timed out after ${options.timeoutMs} ms waiting for ${options.what}`);
    await sleep(options.everyMs ?? 20);
  }
}

/** A multipart/form-data body built by hand, so a test can send it in slow pieces. */
export function multipartBody(fields: Record<string, string>, file: { field?: string; name: string; type?: string; bytes: Buffer }): { body: Buffer; contentType: string } {
  const boundary = `----bandledger-${randomBytes(8).toString("hex")}`;
  const parts: Buffer[] = [];
  for (const [k, v] of Object.entries(fields)) parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${k}"\r\n\r\n${v}\r\n`));
  parts.push(Buffer.from(`--${boundary}\r\nContent-Disposition: form-data; name="${file.field ?? "file"}"; filename="${file.name}"\r\nContent-Type: ${file.type ?? "text/csv"}\r\n\r\n`));
  parts.push(file.bytes, Buffer.from(`\r\n--${boundary}--\r\n`));
  return { body: Buffer.concat(parts), contentType: `multipart/form-data; boundary=${boundary}` };
}

export type RawAnswer = { status: number | null; location: string | null; text: string; error: string | null };

/**
 * A signed-in POST over node:http that writes the body in pieces with a pause between them; `onSent` runs once the
 * last byte is written. A connection the server dropped (the app was killed) answers `status: null` with the error.
 */
export function postInPieces(client: HttpClient, pathname: string, body: Buffer, contentType: string, options: { pieces: number; pauseMs: number; onSent?: () => void }): Promise<RawAnswer> {
  const url = new URL(pathname, client.base);
  return new Promise((resolve) => {
    const req = http.request(url, {
      method: "POST",
      headers: { "content-type": contentType, "content-length": String(body.length), cookie: client.cookieHeader(), origin: client.base },
    }, (res) => {
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => resolve({ status: res.statusCode ?? null, location: (res.headers.location as string | undefined) ?? null, text: Buffer.concat(chunks).toString("utf8"), error: null }));
      res.on("error", (e) => resolve({ status: null, location: null, text: "", error: e.message }));
    });
    req.on("error", (e) => resolve({ status: null, location: null, text: "", error: (e as NodeJS.ErrnoException).code ?? e.message }));
    const size = Math.ceil(body.length / options.pieces);
    let at = 0;
    const next = () => {
      if (req.destroyed) return;
      if (at >= body.length) {
        req.end();
        options.onSent?.();
        return;
      }
      req.write(body.subarray(at, at + size));
      at += size;
      setTimeout(next, options.pauseMs);
    };
    next();
  });
}

/**
 * A POST over node:http with no declared length (chunked), writing `chunk` again and again until the server answers
 * or `maxBytes` are sent: shows whether the server refuses an oversized body while it arrives.
 */
export function streamUntilAnswered(url: string, headers: Record<string, string>, chunk: Buffer, maxBytes: number): Promise<{ status: number | null; sentBytes: number; text: string }> {
  return new Promise((resolve) => {
    let sentBytes = 0;
    let answered = false;
    const req = http.request(url, { method: "POST", headers }, (res) => {
      answered = true;
      const chunks: Buffer[] = [];
      res.on("data", (c: Buffer) => chunks.push(c));
      res.on("end", () => {
        resolve({ status: res.statusCode ?? null, sentBytes, text: Buffer.concat(chunks).toString("utf8") });
        req.destroy();
      });
    });
    req.on("error", () => {
      if (!answered) resolve({ status: null, sentBytes, text: "" });
    });
    const pump = () => {
      while (!answered && !req.destroyed && sentBytes < maxBytes) {
        sentBytes += chunk.length;
        if (!req.write(chunk)) return void req.once("drain", pump);
      }
      if (!answered && !req.destroyed) req.end();
    };
    pump();
  });
}

/**
 * SIGKILL for the app, its primary and every worker in the same moment: no shutdown hook, no closing of a pool, as
 * when the machine loses the processes. Resolves once every one of them is gone.
 */
export async function killApp(app: AppServer): Promise<void> {
  const child = app.process;
  if (child.exitCode !== null || child.signalCode !== null) return;
  const workers = app.workerPids();
  const exited = new Promise<void>((resolve) => child.once("exit", () => resolve()));
  child.kill("SIGKILL");
  for (const pid of workers) {
    try {
      process.kill(pid, "SIGKILL");
    } catch {
      /* gone already */
    }
  }
  await exited;
  await waitFor(() => workers.every((pid) => !isAlive(pid)), { timeoutMs: 5_000, what: "the killed workers to be gone" });
}

/** Whether a process of this pid still runs (a zombie waiting for its parent counts as gone). */
export function isAlive(pid: number): boolean {
  try {
    process.kill(pid, 0);
  } catch {
    return false;
  }
  try {
    return !/^\S+ \(.*\) Z/.test(readFileSync(`/proc/${pid}/stat`, "utf8"));
  } catch {
    return false;
  }
}

/**
 * A connection that sees rows other transactions have not committed yet: how a test learns that the app is inside
 * its transaction, so that a kill lands there.
 */
export async function dirtyReader(url: string): Promise<{ count: (sql: string, params?: unknown[]) => Promise<number>; close: () => Promise<void> }> {
  const conn = await mysql.createConnection({ uri: url });
  await conn.query("SET SESSION TRANSACTION ISOLATION LEVEL READ UNCOMMITTED");
  return {
    count: async (sql, params = []) => {
      const [rows] = await conn.query(sql, params);
      return Number(Object.values((rows as Record<string, unknown>[])[0])[0]);
    },
    close: () => conn.end(),
  };
}

/** A count with a fresh snapshot (autocommit): what has been committed. */
export async function committedCount(pool: mysql.Pool, sql: string, params: unknown[] = []): Promise<number> {
  const [rows] = await pool.query(sql, params);
  return Number(Object.values((rows as Record<string, unknown>[])[0])[0]);
}

/** A signed-in request that gives up after `ms`: a hang is an answer of its own (status 0), never a stuck test. */
export async function within(ms: number, request: (signal: AbortSignal) => Promise<Response>): Promise<Answer & { error: string | null }> {
  const started = performance.now();
  try {
    const r = await request(AbortSignal.timeout(ms));
    const text = await r.text();
    return { status: r.status, location: r.headers.get("location"), text, ms: Math.round(performance.now() - started), error: null };
  } catch (e) {
    const name = (e as Error).name;
    return { status: 0, location: null, text: "", ms: Math.round(performance.now() - started), error: name === "TimeoutError" ? "timeout" : String((e as Error).message) };
  }
}

/** fetch with the client's session cookie and same-origin header, no automatic redirects. */
export function signedFetch(client: HttpClient, pathname: string, init: { form?: Record<string, string>; multipart?: FormData; signal?: AbortSignal } = {}): Promise<Response> {
  const headers: Record<string, string> = { cookie: client.cookieHeader() };
  let body: URLSearchParams | FormData | undefined;
  if (init.form) {
    body = new URLSearchParams(init.form);
    headers["content-type"] = "application/x-www-form-urlencoded";
  } else if (init.multipart) body = init.multipart;
  if (body) headers.origin = client.base;
  return fetch(new URL(pathname, client.base), { method: body ? "POST" : "GET", headers, body, redirect: "manual", signal: init.signal });
}

export function csvForm(fields: Record<string, string>, name: string, bytes: Buffer): FormData {
  const form = new FormData();
  for (const [k, v] of Object.entries(fields)) form.set(k, v);
  form.set("file", new File([new Uint8Array(bytes)], name, { type: "text/csv" }));
  return form;
}

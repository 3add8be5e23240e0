import { randomBytes } from "node:crypto";
import { existsSync } from "node:fs";
import { lstat, readdir, rename, rm } from "node:fs/promises";
import path from "node:path";
import { inArray } from "drizzle-orm";
import { db } from "./db/client";
import { attachments, csvBatches } from "./db/schema";
import { sweepExpiredSessions } from "./session";
import { filesDir } from "./storage";

/**
 * How old a file must be before the sweep may remove it. An upload stores its file first and commits the row that
 * names it moments later (seconds for a 2,000-row CSV); an hour covers any upload still in flight, in this process
 * or another one serving the same data folder, many times over.
 */
export const FILE_GRACE_MS = 60 * 60 * 1000;

export type FileSweep = {
  /** Stored files and unfinished pieces looked at. */
  examined: number;
  /** Digests of the stored files removed: no attachment and no CSV upload names them. */
  removed: string[];
  /** Pieces of a write that never finished (`<digest>.<random>.part`), removed. */
  removedPieces: number;
  bytesFreed: number;
  /** Files not named by any row but younger than the grace period: an upload may be about to name them. */
  keptInGrace: number;
};

const DIGEST = /^[0-9a-f]{64}$/;
const PIECE = /^[0-9a-f]{64}\.[0-9a-f]+\.part$/;
const ASIDE = /^([0-9a-f]{64})\.[0-9a-f]+\.sweep$/;

async function referenced(digests: string[]): Promise<Set<string>> {
  const named = new Set<string>();
  for (let i = 0; i < digests.length; i += 500) {
    const chunk = digests.slice(i, i + 500);
    for (const r of await db().selectDistinct({ sha256: attachments.sha256 }).from(attachments).where(inArray(attachments.sha256, chunk))) named.add(r.sha256);
    for (const r of await db().selectDistinct({ sha256: csvBatches.sha256 }).from(csvBatches).where(inArray(csvBatches.sha256, chunk))) named.add(r.sha256);
  }
  return named;
}

async function fileAt(p: string): Promise<{ size: number; mtimeMs: number } | null> {
  try {
    const s = await lstat(p);
    return s.isFile() ? { size: s.size, mtimeMs: s.mtimeMs } : null;
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code === "ENOENT") return null;
    throw e;
  }
}

/**
 * Removes the stored files no row names (left by an upload killed between storing its file and committing its row)
 * and the pieces of writes that never finished, once they are older than the grace period. A file is first moved
 * aside and looked at again: an upload that stored the same bytes meanwhile has touched it (storeFile refreshes the
 * time of a file it finds) or committed its row, and the file goes back; one that comes after the move finds no file
 * and writes it anew.
 */
export async function sweepUnreferencedFiles(options: { graceMs?: number } = {}): Promise<FileSweep> {
  const graceMs = options.graceMs ?? FILE_GRACE_MS;
  const sweep: FileSweep = { examined: 0, removed: [], removedPieces: 0, bytesFreed: 0, keptInGrace: 0 };
  const root = filesDir();
  if (!existsSync(root)) return sweep;
  const young = (mtimeMs: number) => mtimeMs > Date.now() - graceMs;
  const stored: { digest: string; file: string; mtimeMs: number }[] = [];
  for (const dir of (await readdir(root)).filter((d) => /^[0-9a-f]{2}$/.test(d)).sort()) {
    for (const name of (await readdir(path.join(root, dir))).sort()) {
      const file = path.join(root, dir, name);
      const aside = ASIDE.exec(name);
      if (aside) {
        // Left by a sweep stopped between its move and its decision: back under its digest for the next sweep to judge.
        // (Should another sweep still be deciding about it, that one then finds nothing to remove.)
        await moveBack(file, path.join(root, dir, aside[1]));
        continue;
      }
      const isDigest = DIGEST.test(name) && name.startsWith(dir);
      if (!isDigest && !PIECE.test(name)) continue;
      const stat = await fileAt(file);
      if (!stat) continue;
      sweep.examined++;
      if (isDigest) stored.push({ digest: name, file, mtimeMs: stat.mtimeMs });
      else if (!young(stat.mtimeMs)) {
        // A write aside is renamed into place within moments; one this old was cut off (the process was killed).
        await rm(file, { force: true });
        sweep.removedPieces++;
        sweep.bytesFreed += stat.size;
      }
    }
  }
  const named = await referenced(stored.map((f) => f.digest));
  for (const c of stored.filter((f) => !named.has(f.digest))) {
    if (young(c.mtimeMs)) {
      sweep.keptInGrace++;
      continue;
    }
    const moved = `${c.file}.${randomBytes(6).toString("hex")}.sweep`;
    try {
      await rename(c.file, moved);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === "ENOENT") continue;
      throw e;
    }
    const now = await fileAt(moved);
    if (!now) continue;
    if (young(now.mtimeMs) || (await referenced([c.digest])).has(c.digest)) {
      await moveBack(moved, c.file);
      if (young(now.mtimeMs)) sweep.keptInGrace++;
      continue;
    }
    try {
      await rm(moved);
    } catch (e) {
      if ((e as NodeJS.ErrnoException).code === "ENOENT") continue;
      throw e;
    }
    sweep.removed.push(c.digest);
    sweep.bytesFreed += now.size;
  }
  return sweep;
}

// Content-addressed: replacing a file written anew meanwhile puts the same bytes back.
async function moveBack(from: string, to: string): Promise<void> {
  try {
    await rename(from, to);
  } catch (e) {
    if ((e as NodeJS.ErrnoException).code !== "ENOENT") throw e;
  }
}

export type Housekeeping = { files: FileSweep; expiredSessions: number };

/** The housekeeping steps: run when the app starts and after each digest run; one line of what they did. */
export async function runHousekeeping(options: { graceMs?: number } = {}): Promise<Housekeeping> {
  const files = await sweepUnreferencedFiles(options);
  const expiredSessions = await sweepExpiredSessions();
  const removed = files.removed.length + files.removedPieces;
  console.error(
    `bandledger: housekeeping: ${removed ? `removed ${files.removed.length} unreferenced file${files.removed.length === 1 ? "" : "s"} and ${files.removedPieces} unfinished piece${files.removedPieces === 1 ? "" : "s"} (${files.bytesFreed} bytes)` : "no file to remove"}` +
      `${files.keptInGrace ? `; ${files.keptInGrace} unreferenced file${files.keptInGrace === 1 ? "" : "s"} younger than the grace period kept` : ""}`,
  );
  console.error(`bandledger: housekeeping: ${expiredSessions} expired session${expiredSessions === 1 ? "" : "s"} removed`);
  return { files, expiredSessions };
}

const startKey = Symbol.for("bandledger.housekeeping.started");

/** Once per process at start, in the background: a failure (the database not up yet) is logged, never fatal. */
export function startHousekeeping(): void {
  const g = globalThis as unknown as { [startKey]?: boolean };
  if (g[startKey]) return;
  g[startKey] = true;
  setTimeout(() => {
    runHousekeeping().catch((e: Error) => console.error(`bandledger: housekeeping at start did not run: ${e.message}`));
  }, 0).unref();
}

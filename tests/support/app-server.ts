import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, openSync, readFileSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { freePort } from "./ports";
import { registerAppDatabase, TEST_SESSION_SECRET } from "./session";

export type AppServer = {
  url: string;
  port: number;
  /** The cluster's primary process. */
  process: ChildProcess;
  workers: number;
  logFile: string;
  /** The worker processes the primary has now (their pids, from /proc). */
  workerPids: () => number[];
  stop: () => Promise<void>;
};

// Workers per test server: two, so that every test also runs across processes as `npm start` does on a multi-core
// machine; BANDLEDGER_WORKERS in the environment or `workers` changes it.
const DEFAULT_WORKERS = 2;

export function childPids(pid: number): number[] {
  try {
    return readFileSync(`/proc/${pid}/task/${pid}/children`, "utf8").trim().split(/\s+/).filter(Boolean).map(Number);
  } catch {
    return [];
  }
}

// The production build, served as `npm start` serves it (server/main.ts), against the database and sink given.
export async function startAppServer(options: {
  databaseUrl: string;
  smtpPort: number;
  mailboxDir: string;
  port?: number;
  workers?: number;
  /** A process group of its own, so that a test can send a signal to every process at once, as Ctrl-C does. */
  ownProcessGroup?: boolean;
  /** Node.js flags for the primary, passed on to each worker (e.g. --cpu-prof). */
  nodeArgs?: string[];
  extraEnv?: Record<string, string>;
}): Promise<AppServer> {
  if (!existsSync("build/server/index.js")) throw new Error("no production build: run `npx react-router build` first (npm test does)");
  const port = options.port ?? (await freePort());
  const url = `http://127.0.0.1:${port}`;
  registerAppDatabase(url, options.databaseUrl);
  const workers = options.workers ?? (Number(process.env.BANDLEDGER_WORKERS) || DEFAULT_WORKERS);
  mkdirSync("test-artifacts", { recursive: true });
  const logFile = path.join("test-artifacts", `app-${port}.log`);
  const log = openSync(logFile, "a");
  const logStart = existsSync(logFile) ? readFileSync(logFile).length : 0;
  const child = spawn(process.execPath, [...(options.nodeArgs ?? []), "--import", "tsx", "server/main.ts"], {
    env: {
      ...process.env,
      NODE_ENV: "production",
      PORT: String(port),
      HOST: "127.0.0.1",
      BANDLEDGER_WORKERS: String(workers),
      DATABASE_URL: options.databaseUrl,
      SMTP_URL: `smtp://127.0.0.1:${options.smtpPort}`,
      BANDLEDGER_PUBLIC_URL: url,
      BANDLEDGER_MAILBOX: "on",
      SESSION_SECRET: TEST_SESSION_SECRET,
      BANDLEDGER_MAILBOX_DIR: options.mailboxDir,
      VITEST: "",
      // A data folder of its own unless the test gives one: the app sweeps files its database does not name, and
      // the project's .data/files belong to the developer's database.
      BANDLEDGER_DATA_DIR: mkdtempSync(path.join(os.tmpdir(), "bl-app-data-")),
      ...options.extraEnv,
    },
    stdio: ["ignore", log, log],
    detached: options.ownProcessGroup ?? false,
  });
  // Ready once every worker listens (the primary says so in the log) and /healthz answers.
  const deadline = Date.now() + 60_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`app server exited with ${child.exitCode}; see ${logFile}`);
    const serving = readFileSync(logFile).subarray(logStart).includes(`${workers} worker${workers === 1 ? "" : "s"} serving on`);
    if (serving) {
      try {
        const r = await fetch(`${url}/healthz`);
        if (r.status === 200 || r.status === 503) break;
      } catch {
        /* not listening yet */
      }
    }
    if (Date.now() > deadline) throw new Error(`app server did not answer within 60 s; see ${logFile}`);
    await new Promise((r) => setTimeout(r, 150));
  }
  return {
    url, port, process: child, workers, logFile,
    workerPids: () => (child.pid ? childPids(child.pid) : []),
    stop: () => new Promise<void>((resolve) => {
      if (child.exitCode !== null || child.signalCode !== null) return resolve();
      const pids = child.pid ? childPids(child.pid) : [];
      child.once("exit", () => resolve());
      child.kill("SIGTERM");
      setTimeout(() => {
        child.kill("SIGKILL");
        for (const pid of pids) {
          try {
            process.kill(pid, "SIGKILL");
          } catch {
            /* gone already */
          }
        }
      }, 10_000).unref();
    }),
  };
}

import { spawn, type ChildProcess } from "node:child_process";
import { existsSync, mkdirSync, mkdtempSync, openSync } from "node:fs";
import os from "node:os";
import path from "node:path";
import { freePort } from "./ports";
import { TEST_SESSION_SECRET } from "./session";

export type AppServer = { url: string; port: number; process: ChildProcess; stop: () => Promise<void> };

// The production build, served as `npm start` serves it, against the database and sink given.
export async function startAppServer(options: {
  databaseUrl: string;
  smtpPort: number;
  mailboxDir: string;
  port?: number;
  extraEnv?: Record<string, string>;
}): Promise<AppServer> {
  if (!existsSync("build/server/index.js")) throw new Error("no production build: run `npx react-router build` first (npm test does)");
  const port = options.port ?? (await freePort());
  const url = `http://127.0.0.1:${port}`;
  mkdirSync("test-artifacts", { recursive: true });
  const log = openSync(path.join("test-artifacts", `app-${port}.log`), "a");
  const child = spawn(process.execPath, ["node_modules/@react-router/serve/bin.js", "./build/server/index.js"], {
    env: {
      ...process.env,
      NODE_ENV: "production",
      PORT: String(port),
      HOST: "127.0.0.1",
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
  });
  const deadline = Date.now() + 30_000;
  for (;;) {
    if (child.exitCode !== null) throw new Error(`app server exited with ${child.exitCode}; see test-artifacts/app-${port}.log`);
    try {
      const r = await fetch(`${url}/healthz`);
      if (r.status === 200 || r.status === 503) break;
    } catch {
      /* not listening yet */
    }
    if (Date.now() > deadline) throw new Error("app server did not answer within 30 s");
    await new Promise((r) => setTimeout(r, 150));
  }
  return {
    url, port, process: child,
    stop: () => new Promise<void>((resolve) => {
      if (child.exitCode !== null) return resolve();
      child.once("exit", () => resolve());
      child.kill("SIGTERM");
      setTimeout(() => child.kill("SIGKILL"), 5_000).unref();
    }),
  };
}

import cluster, { type Worker } from "node:cluster";
import { fileURLToPath } from "node:url";
import { answerRateWindowHits, CLUSTER_WORKER_ENV } from "../app/.server/rate-windows";
import { listenAddress, say, workerCount } from "./config";

// A worker that dies within this time of its start counts as a failed start: its replacement waits, longer each
// time, so a worker that cannot start does not spin the machine.
const QUICK_DEATH_MS = 5_000;
const MAX_RESTART_DELAY_MS = 30_000;
// Workers get SIGTERM and this long to finish the requests under way and close their pools; then SIGKILL.
const STOP_GRACE_MS = 8_000;

function describeExit(code: number | null, signal: string | null): string {
  return signal ? `killed by ${signal}` : `exited with code ${code}`;
}

export async function runPrimary(): Promise<void> {
  let count: number;
  try {
    count = workerCount();
    listenAddress();
  } catch (e) {
    say("primary", (e as Error).message);
    process.exit(2);
  }

  answerRateWindowHits(cluster);
  // Workers run plain JavaScript without the TypeScript loader this process was started with; other flags
  // (--cpu-prof, --inspect-port, …) pass on.
  const execArgv: string[] = [];
  for (let i = 0; i < process.execArgv.length; i++) {
    const a = process.execArgv[i];
    if ((a === "--import" || a === "--require" || a === "--loader") && /^tsx(\/|$)/.test(process.execArgv[i + 1] ?? "")) i++;
    else if (!/^--(import|require|loader)=tsx(\/|$)/.test(a)) execArgv.push(a);
  }
  cluster.setupPrimary({ exec: fileURLToPath(new URL("./worker.js", import.meta.url)), execArgv });

  let stopping = false;
  let served = false;
  let quickDeaths = 0;
  const startedAt = new Map<number, number>();

  const fork = (): Worker => {
    const worker = cluster.fork({ [CLUSTER_WORKER_ENV]: "1" });
    startedAt.set(worker.id, Date.now());
    return worker;
  };

  const stop = (why: string, exitCode: number) => {
    if (stopping) return;
    stopping = true;
    const alive = Object.values(cluster.workers ?? {}).filter((w): w is Worker => !!w && !w.isDead());
    say("primary", `${why}: stopping ${alive.length} worker${alive.length === 1 ? "" : "s"}`);
    const finish = () => process.exit(exitCode);
    if (!alive.length) return finish();
    for (const w of alive) w.process.kill("SIGTERM");
    const force = setTimeout(() => {
      for (const w of Object.values(cluster.workers ?? {})) if (w && !w.isDead()) w.process.kill("SIGKILL");
      setTimeout(finish, 200);
    }, STOP_GRACE_MS);
    force.unref();
    cluster.on("exit", () => {
      if (Object.values(cluster.workers ?? {}).every((w) => !w || w.isDead())) finish();
    });
  };

  const listening = new Set<number>();
  let announced = false;
  cluster.on("listening", (worker, address) => {
    served = true;
    listening.add(worker.id);
    say("primary", `worker ${worker.id} (pid ${worker.process.pid}) is listening`);
    if (!announced && listening.size >= count) {
      announced = true;
      say("primary", `${count} worker${count === 1 ? "" : "s"} serving on ${address.address ?? "*"}:${address.port} (primary pid ${process.pid})`);
    }
  });

  cluster.on("exit", (worker, code, signal) => {
    const lived = Date.now() - (startedAt.get(worker.id) ?? Date.now());
    startedAt.delete(worker.id);
    listening.delete(worker.id);
    if (stopping) {
      say("primary", `worker ${worker.id} (pid ${worker.process.pid}) stopped (${describeExit(code, signal)})`);
      return;
    }
    if (!served) {
      // Before the app has served at all, a dying worker is a broken start (a port taken, a missing build).
      stop(`worker ${worker.id} (pid ${worker.process.pid}) ${describeExit(code, signal)} before the app was serving`, 1);
      return;
    }
    quickDeaths = lived < QUICK_DEATH_MS ? quickDeaths + 1 : 0;
    const delay = quickDeaths ? Math.min(MAX_RESTART_DELAY_MS, 250 * 2 ** quickDeaths) : 0;
    say("primary", `worker ${worker.id} (pid ${worker.process.pid}) ${describeExit(code, signal)} after ${Math.round(lived / 1000)} s; starting a replacement${delay ? ` in ${delay} ms` : ""}`);
    setTimeout(() => {
      if (stopping) return;
      const replacement = fork();
      say("primary", `worker ${replacement.id} (pid ${replacement.process.pid}) started in place of worker ${worker.id}`);
    }, delay);
  });

  for (const signal of ["SIGINT", "SIGTERM"] as const) process.on(signal, () => stop(`${signal} received`, 0));

  for (let i = 0; i < count; i++) fork();
}

// @ts-check
// One worker of the production server (forked by server/primary.ts): the React Router build behind Express, as
// react-router-serve serves it, on the port every worker shares. Plain JavaScript on purpose: it runs in each
// worker, and a TypeScript loader would double the time a worker takes to start (measured: 1.3 s → 2.9 s of CPU
// to import the build under tsx). It imports the build and npm packages only.
import cluster from "node:cluster";
import path from "node:path";
import { pathToFileURL } from "node:url";
import { createRequestHandler } from "@react-router/express";
import express from "express";
import morgan from "morgan";
import { coalesceWrites } from "./coalesce.js";
import { compressAnswers } from "./compress.js";

// Requests under way get this long after SIGTERM before their connections are closed; the pool is closed after.
const DRAIN_MS = 3_000;
const who = `worker ${cluster.worker?.id ?? 0}`;

/** @param {string} message */
function say(message) {
  process.stderr.write(`${new Date().toISOString()} bandledger ${who}: ${message}\n`);
}

async function main() {
  const port = Number(process.env.PORT ?? "3000");
  const host = process.env.HOST || undefined;
  const buildPath = path.resolve(process.env.BANDLEDGER_BUILD ?? "build/server/index.js");
  /** @type {import("react-router").ServerBuild} */
  const build = await import(pathToFileURL(buildPath).href);

  const app = express();
  app.disable("x-powered-by");
  app.use(compressAnswers());
  // The static layout of react-router-serve: fingerprinted assets for a year, the rest of the client build and
  // public/ for an hour; static files stay out of the request log. Only a path with a file extension is looked up
  // in the two directories: pages and API paths have none, and each look-up is a stat call (2 % of a registry
  // page's CPU in a profile).
  const clientFiles = express.static(build.assetsBuildDirectory);
  const publicFiles = express.static("public", { maxAge: "1h" });
  /** @type {(serve: import("express").RequestHandler) => import("express").RequestHandler} */
  const filesOnly = (serve) => (req, res, next) => (path.posix.extname(req.path) ? serve(req, res, next) : next());
  app.use(path.posix.join(build.publicPath, "assets"), express.static(path.join(build.assetsBuildDirectory, "assets"), { immutable: true, maxAge: "1y" }));
  app.use(build.publicPath, filesOnly(clientFiles));
  app.use(filesOnly(publicFiles));
  morgan.token("worker", () => String(cluster.worker?.id ?? 0));
  app.use(morgan("w:worker :method :url :status :res[content-length] - :response-time ms"));
  app.use(coalesceWrites());
  app.all("*", createRequestHandler({ build, mode: process.env.NODE_ENV }));

  const server = host ? app.listen(port, host) : app.listen(port);
  server.on("error", (e) => {
    say(`cannot listen on ${host ?? "*"}:${port}: ${e.message}`);
    process.exit(1);
  });

  let stopping = false;
  const stop = () => {
    if (stopping) return;
    stopping = true;
    server.close(() => {
      // The app closes its database pool on this event and exits (app/.server/db/client.ts); without a pool, exit.
      if (!process.emit(/** @type {any} */ ("bandledger:http-closed"))) process.exit(0);
    });
    server.closeIdleConnections();
    setTimeout(() => server.closeAllConnections(), DRAIN_MS).unref();
  };
  // SIGTERM from the primary; SIGINT when Ctrl-C reaches the whole process group at once.
  process.on("SIGTERM", stop);
  process.on("SIGINT", stop);
}

await main();

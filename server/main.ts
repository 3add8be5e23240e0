import { runPrimary } from "./primary";

// The production server: a primary process that forks BANDLEDGER_WORKERS workers (default: one per CPU core), each
// serving the React Router build on the same port through node:cluster (server/worker.js). `npm start` and the
// tests' app server run it as `node --import tsx server/main.ts`.
await runPrimary();

import { closeDb } from "../db/client";
import { sendDigests } from "./notices";

// What a daily scheduler runs: one digest per person with waiting notices, each marked sent once mailed.
const run = await sendDigests();
console.error(`bandledger: sent ${run.people} digest${run.people === 1 ? "" : "s"} with ${run.notices} notice${run.notices === 1 ? "" : "s"}${run.failed ? `; ${run.failed} could not be sent and keep waiting` : ""}`);
await closeDb();
process.exitCode = run.failed ? 1 : 0;

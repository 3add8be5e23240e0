import { closeDb } from "../db/client";
import { runHousekeeping } from "../housekeeping";
import { sendDigests } from "./notices";

// What a daily scheduler runs: one digest per person with waiting notices, each marked sent once mailed; then the
// housekeeping the app also does at start (files a killed upload left behind).
const run = await sendDigests();
console.error(`bandledger: sent ${run.people} digest${run.people === 1 ? "" : "s"} with ${run.notices} notice${run.notices === 1 ? "" : "s"}${run.failed ? `; ${run.failed} could not be sent and keep waiting` : ""}`);
let housekeepingFailed = false;
try {
  await runHousekeeping();
} catch (e) {
  housekeepingFailed = true;
  console.error(`bandledger: housekeeping did not finish: ${(e as Error).message}`);
}
await closeDb();
process.exitCode = run.failed || housekeepingFailed ? 1 : 0;

import { env } from "../env";
import { runMigrations } from "./migrate";

const url = env().databaseUrl;
await runMigrations(url);
console.error(`bandledger: migrations applied to ${new URL(url).pathname.slice(1)}`);

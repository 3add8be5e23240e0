import { env } from "../env";
import { runMigrations } from "./migrate";

// Through the migration account; the runtime account then gets its row rights on every table.
const url = env().migrationDatabaseUrl;
await runMigrations(url, env().runtimeAccount);
console.error(`bandledger: migrations applied to ${new URL(url).pathname.slice(1)}`);

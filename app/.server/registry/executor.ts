import type { Db } from "../db/client";

/** A Drizzle transaction of our database; the registry's writing services run inside one. */
export type Tx = Parameters<Parameters<Db["transaction"]>[0]>[0];
/** The database or a transaction, for reads that may run either way. */
export type Executor = Db | Tx;

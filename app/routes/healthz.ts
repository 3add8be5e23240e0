import type { Route } from "./+types/healthz";
import { pingDatabase } from "~/.server/db/health";

// Public on purpose: load balancers and the start script poll it. It reveals up or down and, on a cluster, which of
// the configured nodes this process uses (its place in DATABASE_URLS, not its address) and the cluster's size.
export async function loader(_: Route.LoaderArgs) {
  const database = await pingDatabase();
  const body = database.ok
    ? { status: "ok", database: { status: "up", latencyMs: database.latencyMs, node: database.node.index, nodes: database.node.of, ...(database.cluster ? { cluster: database.cluster } : {}) } }
    : { status: "degraded", database: { status: "down", error: database.error, node: database.node.index, nodes: database.node.of } };
  return Response.json(body, { status: database.ok ? 200 : 503, headers: { "Cache-Control": "no-store" } });
}

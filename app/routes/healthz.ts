import type { Route } from "./+types/healthz";
import { pingDatabase } from "~/.server/db/health";

// Public on purpose: load balancers and the start script poll it; it reveals only up or down.
export async function loader(_: Route.LoaderArgs) {
  const database = await pingDatabase();
  const body = database.ok
    ? { status: "ok", database: { status: "up", latencyMs: database.latencyMs } }
    : { status: "degraded", database: { status: "down", error: database.error } };
  return Response.json(body, { status: database.ok ? 200 : 503, headers: { "Cache-Control": "no-store" } });
}

import { z } from "zod";
import type { Route } from "./+types/review";
import { requireRole } from "~/.server/permissions";
import { listReviewQueue } from "~/.server/workflow/views";
import { QUEUE_SORTS, ReviewQueueTable, type QueueSort } from "~/components/proposals/review-queue-table";

export const meta: Route.MetaFunction = () => [{ title: "Decisions to make · Bandledger" }];

const viewSchema = z.object({
  sort: z.enum(QUEUE_SORTS).catch("age"),
  dir: z.enum(["asc", "desc"]).catch("asc"),
});

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "lead");
  const view = viewSchema.parse(Object.fromEntries(new URL(request.url).searchParams));
  return { rows: await listReviewQueue(user), view, now: new Date().toISOString(), admin: user.role === "admin" };
}

export default function Review({ loaderData }: Route.ComponentProps) {
  const { rows, view } = loaderData;
  return (
    <div className="space-y-4">
      <header>
        <p className="label">Decisions</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">Proposals waiting for a decision</h1>
        <p className="mt-1 max-w-2xl text-sm text-muted">
          {loaderData.admin ? "Every family's submitted proposals." : "The submitted proposals of the families you lead."} Open one to compare it with the current value, approve it, or reject it with a reason.
        </p>
      </header>
      {rows.length === 0 ? (
        <div className="card p-8 text-center" data-testid="queue-empty">
          <p className="font-medium">Nothing waits for your decision.</p>
          <p className="mt-1 text-sm text-muted">When someone submits a proposal for a family you lead, it appears here and you get a notice.</p>
        </div>
      ) : (
        <>
          <p className="text-sm text-muted">{rows.length} proposal{rows.length === 1 ? "" : "s"}, oldest first unless you sort otherwise.</p>
          <ReviewQueueTable rows={rows} sort={view.sort} dir={view.dir} nowIso={loaderData.now} hrefFor={(sort: QueueSort, dir) => `?sort=${sort}&dir=${dir}`} />
        </>
      )}
    </div>
  );
}

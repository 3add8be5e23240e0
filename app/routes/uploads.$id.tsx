import { data, Link } from "react-router";
import type { Route } from "./+types/uploads.$id";
import { requireRole } from "~/.server/permissions";
import { loadBatch } from "~/.server/workflow/csv-batches";
import { isWorkflowError } from "~/.server/workflow/errors";
import { ProposalStateBadge } from "~/components/proposals/proposal-state";
import { formatBytes } from "~/domain/csv-proposals";
import type { ProposalState } from "~/domain/proposal-schemas";
import { positiveId } from "~/domain/registry-schemas";

export const meta: Route.MetaFunction = ({ params }) => [{ title: `Upload ${params.id} · Bandledger` }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  const id = positiveId.safeParse(params.id);
  if (!id.success) throw data({ message: "Not an upload number." }, { status: 400 });
  try {
    return await loadBatch(user, id.data);
  } catch (e) {
    if (isWorkflowError(e, "not_found")) throw data({ message: e.message }, { status: 404 });
    throw e;
  }
}

export default function Upload({ loaderData: b }: Route.ComponentProps) {
  return (
    <div className="space-y-4">
      <header>
        <p className="label">Upload {b.id}</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">{b.fileName}</h1>
        <p className="mt-1 text-sm text-muted">
          {b.rowCount} proposals by {b.authorName}, {b.createdAt.slice(0, 10)} {b.createdAt.slice(11, 16)} UTC ·{" "}
          <a href={`/uploads/${b.id}/file`}>the file as uploaded</a>{b.sizeBytes !== null ? ` (${formatBytes(b.sizeBytes)})` : ""} ·{" "}
          <span className="font-mono text-xs" title="SHA-256 of the file">sha256 {b.sha256.slice(0, 16)}…</span>
        </p>
      </header>
      <div className="card overflow-x-auto">
        <table className="w-full border-collapse text-sm">
          <thead>
            <tr className="border-b border-rule bg-paper text-left">
              <th scope="col" className="px-3 py-2 font-semibold">Proposal</th>
              <th scope="col" className="px-3 py-2 font-semibold">Material</th>
              <th scope="col" className="px-3 py-2 font-semibold">Quantity</th>
              <th scope="col" className="px-3 py-2 font-semibold">Proposed</th>
              <th scope="col" className="px-3 py-2 font-semibold">State</th>
            </tr>
          </thead>
          <tbody>
            {b.proposals.map((p) => (
              <tr key={p.id} className="border-b border-rule last:border-b-0">
                <td className="px-3 py-1.5"><Link to={`/proposals/${p.id}`}>#{p.id}</Link> <span className="text-xs text-muted">{p.kind === "new_record" ? "new record" : "new value"}</span></td>
                <td className="px-3 py-1.5">{p.material}</td>
                <td className="px-3 py-1.5">{p.quantity}</td>
                <td className="figure px-3 py-1.5 font-mono text-xs">{p.proposed}</td>
                <td className="px-3 py-1.5"><ProposalStateBadge state={p.state as ProposalState} /></td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

import { Form, Link } from "react-router";
import type { Route } from "./+types/proposals";
import { requireRole } from "~/.server/permissions";
import { listMyProposals } from "~/.server/workflow/views";
import { ProposalStateBadge, StaleBadge } from "~/components/proposals/proposal-state";
import { PROPOSAL_KIND_LABELS, type ProposalKind, type ProposalState } from "~/domain/proposal-schemas";

export const meta: Route.MetaFunction = () => [{ title: "Your proposals · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireRole(request, "contributor");
  return { proposals: await listMyProposals(user), isLead: user.role === "lead" || user.role === "admin" };
}

export default function Proposals({ loaderData }: Route.ComponentProps) {
  const { proposals } = loaderData;
  return (
    <div className="space-y-6">
      <header className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <p className="label">Proposals</p>
          <h1 className="mt-1 text-2xl font-semibold tracking-tight">Your proposals</h1>
          <p className="mt-1 max-w-2xl text-sm text-muted">
            A value enters the registry as a proposal with its source; a lead of the material's family other than you approves or rejects it.
          </p>
        </div>
        <div className="flex flex-wrap gap-2">
          <Link to="/proposals/new" className="btn-primary no-underline">New record</Link>
          <Link to="/uploads" className="btn no-underline">Upload a CSV of proposals</Link>
          {loaderData.isLead ? <Link to="/review" className="btn no-underline">Decisions to make</Link> : null}
        </div>
      </header>
      <Form method="get" action="/proposals/new" className="card flex flex-wrap items-end gap-3 p-4" aria-label="Change an existing record">
        <label className="block">
          <span className="label">Change an existing record</span>
          <input name="record" inputMode="numeric" pattern="[0-9]*" required placeholder="record number" className="field mt-1 w-40" aria-describedby="record-hint" />
        </label>
        <label className="block">
          <span className="label">Proposal</span>
          <select name="kind" className="field mt-1" defaultValue="revision">
            <option value="revision">a new value</option>
            <option value="retirement">retire the record</option>
          </select>
        </label>
        <button type="submit" className="btn">Start</button>
        <p id="record-hint" className="w-full text-xs text-muted">The number stands at the top of the record's page (Registry → a value).</p>
      </Form>
      {proposals.length === 0 ? (
        <p className="card p-6 text-sm text-muted">You have not proposed anything yet.</p>
      ) : (
        <div className="card overflow-x-auto">
          <table className="w-full border-collapse text-sm">
            <caption className="sr-only">Your proposals, the most recently changed first</caption>
            <thead>
              <tr className="border-b border-rule bg-paper text-left">
                <th scope="col" className="px-3 py-2 font-semibold">Proposal</th>
                <th scope="col" className="px-3 py-2 font-semibold">Change</th>
                <th scope="col" className="px-3 py-2 font-semibold">State</th>
                <th scope="col" className="px-3 py-2 font-semibold">Last change</th>
              </tr>
            </thead>
            <tbody>
              {proposals.map((p) => (
                <tr key={p.id} className="border-b border-rule last:border-b-0">
                  <td className="px-3 py-2 align-top">
                    <Link to={p.state === "draft" ? `/proposals/${p.id}/edit` : `/proposals/${p.id}`} className="font-medium">{p.title}</Link>
                    <span className="block text-xs text-muted">#{p.id} · {PROPOSAL_KIND_LABELS[p.kind as ProposalKind]}{p.batchId ? ` · from upload ${p.batchId}` : ""}</span>
                  </td>
                  <td className="figure px-3 py-2 align-top font-mono text-xs">{p.change}</td>
                  <td className="px-3 py-2 align-top">
                    <span className="flex flex-wrap gap-1"><ProposalStateBadge state={p.state as ProposalState} />{p.stale ? <StaleBadge /> : null}</span>
                  </td>
                  <td className="figure px-3 py-2 align-top whitespace-nowrap">{p.updatedAt.slice(0, 10)} {p.updatedAt.slice(11, 16)} UTC</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}

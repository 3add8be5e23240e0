import type { Route } from "./+types/sets";
import { hasRole, requireUser } from "~/.server/permissions";
import { listSets } from "~/.server/sets/queries";

export const meta: Route.MetaFunction = () => [{ title: "Parameter sets · Bandledger" }];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const sets = await listSets();
  return { sets, canCreate: hasRole(user, "contributor") };
}

export default function Sets({ loaderData }: Route.ComponentProps) {
  const { sets, canCreate } = loaderData;
  return (
    <div className="space-y-6">
      <header className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <p className="label">Parameter sets</p>
          <h1 className="mt-1 text-2xl font-semibold tracking-tight">Named selections, frozen into releases</h1>
          <p className="mt-1 max-w-2xl text-sm text-muted">
            A draft set follows the current values of its records. Freezing pins the exact revisions into a numbered release with a SHA-256 hash that never changes;
            pipelines download releases by API or with <code className="font-mono">bandledger download</code>.
          </p>
        </div>
        {canCreate ? <a href="/sets/new" className="btn-primary no-underline">New set</a> : null}
      </header>
      {sets.length === 0 ? (
        <section className="card p-6 text-sm">
          <h2 className="font-semibold">No sets yet</h2>
          <p className="mt-1 text-muted">
            {canCreate ? "Create the first one, add the records your simulation uses, and ask a lead to freeze it." : "When a contributor creates a set, it appears here."}
          </p>
        </section>
      ) : (
        <div className="card overflow-x-auto">
          <table className="w-full text-sm">
            <thead className="border-b border-rule text-left text-xs text-muted uppercase">
              <tr>
                <th className="px-3 py-2">Set</th>
                <th className="px-3 py-2">Purpose</th>
                <th className="px-3 py-2 text-right">Members</th>
                <th className="px-3 py-2">Latest release</th>
                <th className="px-3 py-2">SHA-256</th>
              </tr>
            </thead>
            <tbody>
              {sets.map((s) => (
                <tr key={s.slug} className="border-b border-rule last:border-0">
                  <td className="px-3 py-2 font-medium"><a href={`/sets/${s.slug}`}>{s.name}</a></td>
                  <td className="px-3 py-2 text-muted">{s.purpose}</td>
                  <td className="num px-3 py-2 text-right">{s.memberCount}</td>
                  <td className="px-3 py-2">
                    {s.latestRelease ? (
                      <a href={`/sets/${s.slug}/releases/${s.latestRelease.number}`}>
                        release {s.latestRelease.number} · {s.latestRelease.frozenAt.slice(0, 10)}
                      </a>
                    ) : (
                      <span className="rounded bg-copper-soft px-1.5 py-0.5 text-xs text-copper">draft, never frozen</span>
                    )}
                  </td>
                  <td className="px-3 py-2 font-mono text-xs text-muted">{s.latestRelease ? `${s.latestRelease.sha256.slice(0, 12)}…` : "—"}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}

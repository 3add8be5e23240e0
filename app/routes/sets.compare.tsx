import { data, Form } from "react-router";
import type { Route } from "./+types/sets.compare";
import { compareQuerySchema } from "~/domain/api-schemas";
import type { ReleaseItem } from "~/domain/release-format";
import { requireUser } from "~/.server/permissions";
import { compareSet, type ComparisonEntry } from "~/.server/sets/compare";
import { orSetErrorPage } from "~/.server/sets/http";
import { listReleases, requireSet } from "~/.server/sets/queries";
import { SourceText, ValueText } from "~/components/release-values";

export const meta: Route.MetaFunction = ({ data }) => [{ title: data ? `${data.comparison.set.name}: compare · Bandledger` : "Compare · Bandledger" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  return orSetErrorPage(async () => {
    const set = await requireSet(params.slug);
    const releases = await listReleases(set);
    const search = Object.fromEntries(new URL(request.url).searchParams);
    const parsed = compareQuerySchema.safeParse({ from: search.from ?? (releases[1]?.number ?? releases[0]?.number), to: search.to ?? (releases[1] ? releases[0].number : "current") });
    if (!releases.length) throw data({ message: `${set.name} has no release yet, so there is nothing to compare.` }, { status: 404 });
    if (!parsed.success) throw data({ message: "Choose a release number to compare from, and a release number or “current” to compare to." }, { status: 400 });
    const comparison = await compareSet(params.slug, parsed.data.from, parsed.data.to);
    return { comparison, releases: releases.map((r) => r.number) };
  });
}

function Side({ item }: { item: ReleaseItem | null }) {
  if (!item) return <span className="text-muted">—</span>;
  return (
    <div className="space-y-1">
      <ValueText item={item} />
      <div className="text-xs"><SourceText item={item} /></div>
      {item.notes ? <p className="text-xs text-muted">{item.notes}</p> : null}
      <p className="font-mono text-xs text-muted">revision {item.revisionSeq} (#{item.revisionId})</p>
    </div>
  );
}

function Entries({ title, entries, tone }: { title: string; entries: ComparisonEntry[]; tone: string }) {
  return (
    <section aria-label={title} className="space-y-2">
      <h2 className="text-lg font-semibold"><span className={tone}>{title}</span> <span className="text-sm font-normal text-muted">({entries.length})</span></h2>
      {entries.length === 0 ? <p className="text-sm text-muted">None.</p> : (
        <div className="card overflow-x-auto">
          <table className="w-full text-sm">
            <thead className="border-b border-rule text-left text-xs text-muted uppercase">
              <tr><th className="w-1/4 px-3 py-2">Value</th><th className="px-3 py-2">Old</th><th className="px-3 py-2">New</th></tr>
            </thead>
            <tbody>
              {entries.map((e) => (
                <tr key={e.recordId} className="border-b border-rule align-top last:border-0">
                  <td className="px-3 py-2 font-medium">{e.label}<span className="block font-mono text-xs text-muted">record #{e.recordId}</span></td>
                  <td className="px-3 py-2"><Side item={e.old} /></td>
                  <td className="px-3 py-2"><Side item={e.new} /></td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </section>
  );
}

export default function Compare({ loaderData }: Route.ComponentProps) {
  const { comparison: c, releases } = loaderData;
  const toLabel = c.to.release === "current" ? "the current registry" : `release ${c.to.release}`;
  const apiHref = `/api/v1/sets/${c.set.slug}/compare?from=${c.from.release}&to=${c.to.release}`;
  return (
    <div className="space-y-6">
      <header className="space-y-2">
        <p className="label"><a href="/sets">Parameter sets</a> · <a href={`/sets/${c.set.slug}`}>{c.set.name}</a></p>
        <h1 className="text-2xl font-semibold tracking-tight">Release {c.from.release} → {toLabel}</h1>
        <p className="text-sm text-muted">
          {c.changed.length} changed, {c.added.length} added, {c.removed.length} removed, {c.unchanged} unchanged. As JSON: <a href={apiHref}>{apiHref}</a>
        </p>
        <Form method="get" className="flex flex-wrap items-end gap-3 text-sm">
          <label><span className="label">From</span>
            <select name="from" defaultValue={c.from.release} className="field mt-1">{releases.map((n) => <option key={n} value={n}>release {n}</option>)}</select>
          </label>
          <label><span className="label">To</span>
            <select name="to" defaultValue={String(c.to.release)} className="field mt-1">
              <option value="current">current registry</option>
              {releases.map((n) => <option key={n} value={n}>release {n}</option>)}
            </select>
          </label>
          <button type="submit" className="btn">Compare</button>
        </Form>
      </header>
      <Entries title="Changed" entries={c.changed} tone="text-copper" />
      <Entries title="Added" entries={c.added} tone="text-teal" />
      <Entries title="Removed" entries={c.removed} tone="text-fail" />
    </div>
  );
}

import { data } from "react-router";
import type { Route } from "./+types/sets.release";
import { requireUser } from "~/.server/permissions";
import { loadReleaseEvaluation } from "~/.server/sets/evaluate";
import { orSetErrorPage } from "~/.server/sets/http";
import { itemsOfRelease, requireRelease, requireSet } from "~/.server/sets/queries";
import { ReleaseEvaluation } from "~/components/derived";
import { conditionText, SourceText, ValueText } from "~/components/release-values";

export const meta: Route.MetaFunction = ({ data }) => [{ title: data ? `${data.set.name}, release ${data.release.number} · Bandledger` : "Release · Bandledger" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireUser(request);
  if (!/^\d{1,7}$/.test(params.number)) throw data({ message: "A release is numbered 1, 2, 3, …" }, { status: 404 });
  return orSetErrorPage(async () => {
    const set = await requireSet(params.slug);
    const stored = await requireRelease(set, Number(params.number));
    const { canonicalJson: _json, csv: _csv, ...release } = stored;
    const evaluation = await loadReleaseEvaluation(set.slug, stored.number, new URL(request.url).searchParams);
    return { set: { slug: set.slug, name: set.name, purpose: set.purpose }, release, items: itemsOfRelease(stored), evaluation };
  });
}

export default function Release({ loaderData }: Route.ComponentProps) {
  const { set, release, items, evaluation } = loaderData;
  const rows: [string, React.ReactNode][] = [
    ["Frozen", `${release.frozenAt.replace("T", " ").slice(0, 19)} UTC by ${release.frozenBy}`],
    ["Values", String(release.itemCount)],
    ["Constants", release.codataEdition],
    ["Software", `Bandledger ${release.softwareVersion}`],
    ["SHA-256 (content)", <code key="h" className="font-mono text-xs break-all" data-testid="release-sha256">{release.sha256}</code>],
    ["SHA-256 (CSV bytes)", <code key="c" className="font-mono text-xs break-all">{release.csvSha256}</code>],
  ];
  return (
    <div className="space-y-6">
      <header className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <p className="label"><a href="/sets">Parameter sets</a> · <a href={`/sets/${set.slug}`}>{set.name}</a></p>
          <h1 className="mt-1 text-2xl font-semibold tracking-tight">{set.name}, release {release.number}</h1>
          <p className="mt-1 text-muted">{set.purpose}</p>
        </div>
        <div className="flex flex-wrap gap-2">
          <a className="btn-primary no-underline" href={release.downloads.json} download>Download JSON</a>
          <a className="btn no-underline" href={release.downloads.csv} download>Download CSV</a>
          {release.number > 1 ? <a className="btn no-underline" href={`/sets/${set.slug}/compare?from=${release.number - 1}&to=${release.number}`}>What changed since {release.number - 1}</a> : null}
        </div>
      </header>
      <dl className="card grid gap-x-6 gap-y-2 p-5 text-sm sm:grid-cols-[12rem_1fr]">
        {rows.map(([k, v]) => (
          <div key={k} className="contents">
            <dt className="text-muted">{k}</dt>
            <dd>{v}</dd>
          </div>
        ))}
      </dl>
      <p className="text-sm text-muted">
        Download and verify it from a pipeline: <code className="font-mono">npm run --silent bandledger -- download {set.slug} {release.number} --out {set.slug}-r{release.number}.json</code>
      </p>
      <ReleaseEvaluation page={evaluation} apiPath={`/api/v1/sets/${set.slug}/releases/${release.number}/evaluate`} refText={`${set.slug} ${release.number}`} />
      <div className="card overflow-x-auto">
        <table className="w-full text-sm">
          <thead className="border-b border-rule text-left text-xs text-muted uppercase">
            <tr>
              <th className="px-3 py-2">Material</th>
              <th className="px-3 py-2">Quantity</th>
              <th className="px-3 py-2">Conditions</th>
              <th className="px-3 py-2 text-right">Value</th>
              <th className="px-3 py-2">Method</th>
              <th className="px-3 py-2">Source</th>
              <th className="px-3 py-2">Revision</th>
            </tr>
          </thead>
          <tbody>
            {items.map((i) => (
              <tr key={i.recordId} className="border-b border-rule align-top last:border-0">
                <td className="px-3 py-2 font-medium">{i.material.key}</td>
                <td className="px-3 py-2">{i.quantity.symbol} <span className="text-xs text-muted">{i.quantity.name}</span></td>
                <td className="px-3 py-2 text-muted">{conditionText(i)}</td>
                <td className="px-3 py-2 text-right"><ValueText item={i} /></td>
                <td className="px-3 py-2 text-muted">{i.method ?? "—"}</td>
                <td className="px-3 py-2"><SourceText item={i} /></td>
                <td className="px-3 py-2 font-mono text-xs text-muted">#{i.recordId}·r{i.revisionSeq}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}

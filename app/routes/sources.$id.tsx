import { data } from "react-router";
import { z } from "zod";
import type { Route } from "./+types/sources.$id";
import { db } from "~/.server/db/client";
import { requireUser } from "~/.server/permissions";
import { loadSource } from "~/.server/registry/source-pages";
import { conditionsLabel, StateBadge, ValueWithUnit } from "~/components/registry/format";
import { Pager } from "~/components/registry/pager";
import { SourceReference } from "~/components/registry/source-link";
import { positiveId } from "~/domain/registry-schemas";

export const meta: Route.MetaFunction = ({ data: d }) => [{ title: d ? `${d.source.label} · Sources · Bandledger` : "Source · Bandledger" }];

const searchSchema = z.object({ page: z.coerce.number().int().min(1).max(100_000).default(1).catch(1) });
const SIZE = 100;

export async function loader({ request, params }: Route.LoaderArgs) {
  const id = positiveId.safeParse(params.id);
  const { page } = searchSchema.parse(Object.fromEntries(new URL(request.url).searchParams));
  await requireUser(request);
  const detail = id.success ? await loadSource(db(), id.data, { page, size: SIZE }) : null;
  if (!detail) throw data({ message: `There is no source ${params.id}.` }, { status: 404 });
  return detail;
}

export default function SourcePage({ loaderData }: Route.ComponentProps) {
  const { source, citing, total, page, pageCount } = loaderData;
  return (
    <div className="space-y-4">
      <header>
        <p className="label"><a href="/sources">Sources</a> · {source.kind === "report" ? "internal report" : source.kind === "bibtex" ? "BibTeX entry" : "DOI"}</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">{source.label}</h1>
        <p className="mt-1 text-sm"><SourceReference source={source} /></p>
        {source.authors ? <p className="text-sm text-muted">{source.authors}{source.year ? `, ${source.year}` : ""}</p> : null}
      </header>
      {source.bibtex ? (
        <details className="card p-3">
          <summary className="cursor-pointer text-sm font-medium">BibTeX entry as entered</summary>
          <pre className="mt-2 overflow-x-auto text-xs">{source.bibtex}</pre>
        </details>
      ) : null}
      <section className="card overflow-x-auto" aria-labelledby="citing">
        <h2 id="citing" className="border-b border-rule px-4 py-2 font-semibold">Values citing this source</h2>
        {citing.length === 0 ? (
          <p className="px-4 py-3 text-sm text-muted">No revision cites this source yet.</p>
        ) : (
          <table className="w-full text-sm">
            <thead className="text-left text-xs text-muted uppercase">
              <tr>
                <th scope="col" className="px-4 py-1.5">Material</th>
                <th scope="col" className="px-4 py-1.5">Quantity</th>
                <th scope="col" className="px-4 py-1.5">Conditions</th>
                <th scope="col" className="px-4 py-1.5">Value</th>
                <th scope="col" className="px-4 py-1.5">Revision</th>
                <th scope="col" className="px-4 py-1.5">Locator</th>
              </tr>
            </thead>
            <tbody>
              {citing.map((c) => (
                <tr key={c.revisionId} className="border-t border-rule">
                  <td className="px-4 py-1.5"><a href={`/materials/${encodeURIComponent(c.materialKey)}`}>{c.materialKey}</a></td>
                  <td className="px-4 py-1.5"><span className="font-mono">{c.quantitySymbol}</span> <span className="text-muted">{c.quantityName}</span></td>
                  <td className="px-4 py-1.5 text-muted">{conditionsLabel({ quantityKey: c.quantityKey, valley: c.valley, temperatureK: c.temperatureK, composition: c.composition })}</td>
                  <td className="px-4 py-1.5">{c.kind === "retirement" ? <span className="text-fail">retirement</span> : <ValueWithUnit value={c.value} unit={c.unit} />}</td>
                  <td className="px-4 py-1.5"><a href={`/records/${c.recordId}`}>rev {c.seq}</a> <StateBadge state={c.state} /></td>
                  <td className="px-4 py-1.5 text-muted">{c.locator}</td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </section>
      {pageCount > 1 ? <Pager page={page} pageCount={pageCount} total={total} size={SIZE} href={(p) => `/sources/${source.id}?page=${p}`} noun="revisions" /> : null}
    </div>
  );
}

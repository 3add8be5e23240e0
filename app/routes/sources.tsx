import { z } from "zod";
import type { Route } from "./+types/sources";
import { db } from "~/.server/db/client";
import { requireUser } from "~/.server/permissions";
import { listSources } from "~/.server/registry/source-pages";
import { conditionsLabel, ValueWithUnit } from "~/components/registry/format";
import { Pager } from "~/components/registry/pager";
import { SourceReference } from "~/components/registry/source-link";

export const meta: Route.MetaFunction = () => [{ title: "Sources · Bandledger" }];

const searchSchema = z.object({ page: z.coerce.number().int().min(1).max(100_000).default(1).catch(1) });
const SIZE = 25;

export async function loader({ request }: Route.LoaderArgs) {
  const { page } = searchSchema.parse(Object.fromEntries(new URL(request.url).searchParams));
  await requireUser(request);
  return listSources(db(), { page, size: SIZE });
}

const KIND = { doi: "DOI", bibtex: "BibTeX", report: "internal report" } as const;

export default function Sources({ loaderData }: Route.ComponentProps) {
  const { sources, total, page, pageCount } = loaderData;
  return (
    <div className="space-y-4">
      <header>
        <p className="label">Sources</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">Papers, books and internal reports</h1>
        <p className="mt-1 text-sm text-muted">Every source with the values that cite it. A DOI is checked for its format only; nothing is looked up on the network.</p>
      </header>
      {total === 0 ? (
        <p className="card p-6 text-sm text-muted">No sources are filed yet. They arrive with the first proposals.</p>
      ) : (
        <ul className="space-y-3">
          {sources.map((s) => (
            <li key={s.id} className="card p-4">
              <div className="flex flex-wrap items-baseline justify-between gap-2">
                <h2 className="font-semibold">
                  <a href={`/sources/${s.id}`}>{s.label}</a> <span className="text-xs font-normal text-muted">{KIND[s.kind]}</span>
                </h2>
                <p className="text-xs text-muted">
                  cited by <span className="figure">{s.revisionCount}</span> revision{s.revisionCount === 1 ? "" : "s"}, <span className="figure">{s.currentCount}</span> current value
                  {s.currentCount === 1 ? "" : "s"}
                </p>
              </div>
              <p className="mt-1 text-sm"><SourceReference source={s} /></p>
              {s.values.length ? (
                <table className="mt-2 w-full table-fixed text-sm">
                  <caption className="sr-only">Current values citing {s.label}</caption>
                  <tbody>
                    {s.values.map((v) => (
                      <tr key={v.recordId} className="border-t border-rule">
                        <td className="w-28 py-1 pr-3"><a href={`/materials/${encodeURIComponent(v.materialKey)}`}>{v.materialKey}</a></td>
                        <td className="w-64 py-1 pr-3"><span className="font-mono">{v.quantitySymbol}</span> <span className="text-muted">{v.quantityName}</span></td>
                        <td className="w-44 py-1 pr-3 text-muted">{conditionsLabel({ quantityKey: v.quantityKey, valley: v.valley, temperatureK: v.temperatureK, composition: v.composition })}</td>
                        <td className="w-40 py-1 pr-3"><a href={`/records/${v.recordId}`} className="no-underline"><ValueWithUnit value={v.value} unit={v.unit} className="text-ink" /></a></td>
                        <td className="truncate py-1 text-muted" title={v.locator ?? undefined}>{v.locator}</td>
                      </tr>
                    ))}
                  </tbody>
                </table>
              ) : (
                <p className="mt-2 text-xs text-muted">No current value cites this source.</p>
              )}
              {s.revisionCount > s.values.length ? (
                <p className="mt-1 text-sm">
                  <a href={`/sources/${s.id}`}>{s.revisionCount === 1 ? "The revision citing it" : `All ${s.revisionCount} revisions citing it`}</a>
                </p>
              ) : null}
            </li>
          ))}
        </ul>
      )}
      {pageCount > 1 ? <Pager page={page} pageCount={pageCount} total={total} size={SIZE} href={(p) => `/sources?page=${p}`} noun="sources" /> : null}
    </div>
  );
}

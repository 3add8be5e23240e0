import { data, Link } from "react-router";
import type { Route } from "./+types/records.$id";
import { db } from "~/.server/db/client";
import { checkReportForRecord } from "~/.server/checks";
import { hasRole, requireUser } from "~/.server/permissions";
import { loadRecord } from "~/.server/registry/record-page";
import { CheckReportView } from "~/components/checks";
import { conditionsLabel, StateBadge, ValueWithUnit } from "~/components/registry/format";
import { SimulationCaution } from "~/components/registry/material-overview";
import { Provenance } from "~/components/registry/provenance";
import { RevisionHistory } from "~/components/registry/revision-history";
import { positiveId } from "~/domain/registry-schemas";
import { pickRevisionPair } from "~/domain/revision-pair";

export const meta: Route.MetaFunction = ({ data: d }) => [
  { title: d ? `${d.material.key} ${d.record.quantity.symbol} (record ${d.record.id}) · Bandledger` : "Record · Bandledger" },
];

export async function loader({ request, params }: Route.LoaderArgs) {
  const id = positiveId.safeParse(params.id);
  const search = new URL(request.url).searchParams;
  const user = await requireUser(request);
  const page = id.success ? await loadRecord(db(), id.data) : null;
  if (!page) throw data({ message: `There is no record ${params.id}.` }, { status: 404 });
  const asked = search.has("from") || search.has("to");
  const pair = asked ? pickRevisionPair(page.record.revisions, { from: search.get("from"), to: search.get("to") }) : null;
  const checks = await checkReportForRecord(page.record.id);
  const canPropose = hasRole(user, "contributor") && page.record.status !== "retired";
  return { ...page, pair, checks, canPropose };
}

export default function RecordPage({ loaderData }: Route.ComponentProps) {
  const { material, record, pair, checks, canPropose } = loaderData;
  const q = record.quantity;
  const head = record.revisions[0];
  const current = record.revisions.find((r) => r.state === "current");
  const lastValue = record.revisions.find((r) => r.kind === "value");
  const conditions = conditionsLabel({ quantityKey: q.key, valley: record.valley, temperatureK: record.temperatureK, composition: record.composition });
  return (
    <div className="space-y-5">
      <header>
        <p className="label">
          <Link to={`/materials/${encodeURIComponent(material.key)}`}>{material.name}</Link> · record {record.id}
        </p>
        <h1 className="mt-1 flex flex-wrap items-center gap-3 text-2xl font-semibold tracking-tight">
          <span>
            {material.key} · {q.name} <span className="font-mono text-lg text-muted">{q.symbol}</span>
          </span>
          <StateBadge state={record.status === "retired" ? "retired" : "current"} />
        </h1>
        <p className="mt-1 text-sm text-muted">{conditions}</p>
        {canPropose ? (
          <p className="mt-3 flex flex-wrap gap-2">
            <Link className="btn-primary no-underline" to={`/proposals/new?record=${record.id}&kind=revision`}>Propose a new value</Link>
            <Link className="btn no-underline" to={`/proposals/new?record=${record.id}&kind=retirement`}>Propose retiring this record</Link>
          </p>
        ) : null}
      </header>
      <SimulationCaution />
      <section className="card grid gap-4 p-4 md:grid-cols-[14rem_1fr]" aria-labelledby="current-heading">
        <div>
          <h2 id="current-heading" className="label">{record.status === "retired" ? "Retired" : "Current value"}</h2>
          <p className="mt-1 text-2xl">
            {current ? <ValueWithUnit value={current.value} unit={q.canonicalUnit} /> : <span className="text-fail">no current value</span>}
          </p>
          {!current && lastValue ? (
            <p className="mt-1 text-sm text-muted">
              last value <ValueWithUnit value={lastValue.value} unit={q.canonicalUnit} /> (revision {lastValue.seq})
            </p>
          ) : null}
          <p className="mt-1 text-sm text-muted">{conditions}</p>
          {head ? <p className="mt-1 text-xs text-muted">revision {head.seq} of {record.revisions.length}</p> : null}
        </div>
        {head ? <Provenance revision={head} unit={q.canonicalUnit} /> : null}
      </section>
      <CheckReportView report={checks.report} message={checks.message} />
      <section id={`record-${record.id}`} className="card p-4" aria-labelledby="history-heading">
        <h2 id="history-heading" className="mb-2 font-semibold">History, newest first</h2>
        <RevisionHistory recordId={record.id} revisions={record.revisions} unit={q.canonicalUnit} action={`/records/${record.id}`} pair={pair} />
      </section>
    </div>
  );
}

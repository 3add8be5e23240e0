import type { ReactNode } from "react";
import type { MaterialDetail } from "~/.server/registry/material-page";
import type { RecordWithHistory } from "~/.server/registry/revision-rows";
import { quantityByKey } from "~/domain/quantities";
import { conditionsLabel, formatDay, methodLabel, StateBadge, UncertaintyText, ValueWithUnit } from "./format";
import { Provenance } from "./provenance";
import type { RevisionPair } from "~/domain/revision-pair";
import { RevisionHistory } from "./revision-history";
import { SourceLink } from "./source-link";

const STRUCTURES = { diamond: "diamond", zinc_blende: "zinc blende", wurtzite: "wurtzite" } as const;

export function SimulationCaution() {
  return (
    <p role="note" className="rounded border-l-4 border-warn bg-sheet px-3 py-2 text-sm">
      <strong className="font-semibold text-warn">For simulation.</strong> These values feed simulations; confirm them against the team's own
      measurements and qualification rules before any device decision.
    </p>
  );
}

export function MaterialHeader({ material }: { material: MaterialDetail }) {
  return (
    <header>
      <p className="label">
        <a href="/materials">Materials</a> · {material.family.name}
      </p>
      <h1 className="mt-1 text-2xl font-semibold tracking-tight">
        {material.name} <span className="font-mono text-lg text-muted">{material.formula}</span>
      </h1>
      <p className="mt-1 text-sm text-muted">
        {material.kind === "alloy" ? "Alloy" : material.kind === "element" ? "Element" : "Binary compound"}, {STRUCTURES[material.structure]} structure
        {material.endMemberA && material.endMemberB ? (
          <>
            ; {material.compositionVariable ?? "x"} is the fraction of end member A ={" "}
            <a href={`/materials/${encodeURIComponent(material.endMemberA.key)}`}>{material.endMemberA.key}</a>, the rest is B ={" "}
            <a href={`/materials/${encodeURIComponent(material.endMemberB.key)}`}>{material.endMemberB.key}</a>
          </>
        ) : null}
        .{material.description ? ` ${material.description}` : ""}
      </p>
    </header>
  );
}

function RecordItem({ record, pair, action }: { record: RecordWithHistory; pair: RevisionPair | null; action: string }) {
  const head = record.revisions[0];
  const q = record.quantity;
  const label = conditionsLabel({ quantityKey: q.key, valley: record.valley, temperatureK: record.temperatureK, composition: record.composition });
  const open = pair !== null;
  return (
    <li id={`record-${record.id}`} className="py-3" data-record={record.id}>
      <div className="grid gap-x-4 gap-y-1 sm:grid-cols-[12rem_11rem_9rem_1fr]">
        <div className="text-sm">
          <span className="font-mono">{q.symbol}</span> <span className="text-muted">{label}</span>
        </div>
        <div className="text-base">
          {head?.kind === "value" ? <ValueWithUnit value={head.value} unit={q.canonicalUnit} /> : <span className="text-fail">retired</span>}
        </div>
        <div className="text-sm">{head?.kind === "value" ? <UncertaintyText uncertainty={head.uncertainty} unit={q.canonicalUnit} missing="uncertainty not stated" /> : null}</div>
        <div className="text-sm">
          {head ? (
            <>
              <SourceLink source={head.source} locator={head.locator} />
              <span className="text-muted">
                {" "}· {head.kind === "value" ? methodLabel(head.method) : "retirement"} · approved <span className="figure">{formatDay(head.approvedAt)}</span> by {head.approvedBy}
              </span>
            </>
          ) : null}
        </div>
      </div>
      <details className="mt-1" open={open}>
        <summary className="cursor-pointer text-sm text-teal">
          Provenance and history ({record.revisions.length} revision{record.revisions.length === 1 ? "" : "s"})
        </summary>
        <div className="mt-2 grid gap-4 rounded border border-rule bg-paper p-3 lg:grid-cols-[minmax(0,2fr)_minmax(0,3fr)]">
          <div>
            <h4 className="mb-1 flex items-center gap-2 text-sm font-semibold">
              Revision {head?.seq} {head ? <StateBadge state={head.state} /> : null}
            </h4>
            {head ? <Provenance revision={head} unit={q.canonicalUnit} /> : null}
            <p className="mt-2 text-sm">
              <a href={`/records/${record.id}`}>Record page</a>
            </p>
          </div>
          <RevisionHistory recordId={record.id} revisions={record.revisions} unit={q.canonicalUnit} action={action} pair={pair} />
        </div>
      </details>
    </li>
  );
}

function groupByQuantity(records: RecordWithHistory[]) {
  const groups = new Map<string, RecordWithHistory[]>();
  for (const r of records) groups.set(r.quantity.key, [...(groups.get(r.quantity.key) ?? []), r]);
  return [...groups.values()];
}

/**
 * A material's current values grouped by quantity, each with its provenance and history. `derived` is the slot
 * for numbers and plots computed from these values (Eg(T), alloy curves, checks); it is shown after the caution.
 */
export function MaterialOverview({ material, records, compare, action, derived }: {
  material: MaterialDetail;
  records: RecordWithHistory[];
  compare: { recordId: number; pair: RevisionPair } | null;
  action: string;
  derived?: ReactNode;
}) {
  const active = records.filter((r) => r.status === "active");
  const retired = records.filter((r) => r.status === "retired");
  const pairFor = (id: number) => (compare && compare.recordId === id ? compare.pair : null);
  return (
    <div className="space-y-5">
      <MaterialHeader material={material} />
      <SimulationCaution />
      {derived}
      <section aria-labelledby="current-values">
        <h2 id="current-values" className="text-lg font-semibold">Current values</h2>
        {active.length === 0 ? (
          <p className="card mt-2 p-4 text-muted">No approved values are filed for {material.name} yet. A contributor can propose one with its source.</p>
        ) : (
          <div className="mt-2 space-y-3">
            {groupByQuantity(active).map((group) => {
              const q = group[0].quantity;
              return (
                <section key={q.key} className="card px-4 py-2" aria-labelledby={`quantity-${q.key}`}>
                  <h3 id={`quantity-${q.key}`} className="pt-1 font-semibold">
                    {q.name} <span className="font-mono text-sm text-muted">{q.symbol}</span>
                  </h3>
                  <p className="text-xs text-muted">{quantityByKey(q.key)?.description}</p>
                  <ul className="divide-y divide-rule">
                    {group.map((r) => (
                      <RecordItem key={r.id} record={r} pair={pairFor(r.id)} action={action} />
                    ))}
                  </ul>
                </section>
              );
            })}
          </div>
        )}
      </section>
      {retired.length ? (
        <section aria-labelledby="retired-records" className="card px-4 py-2">
          <h2 id="retired-records" className="pt-1 font-semibold">Retired records</h2>
          <p className="text-xs text-muted">No longer in use; kept with their history.</p>
          <ul className="divide-y divide-rule">
            {retired.map((r) => (
              <RecordItem key={r.id} record={r} pair={pairFor(r.id)} action={action} />
            ))}
          </ul>
        </section>
      ) : null}
    </div>
  );
}

import { formatDay, methodLabel, UncertaintyText, ValueWithUnit } from "~/components/registry/format";
import { SourceReference } from "~/components/registry/source-link";
import type { RevisionView } from "~/domain/revision-view";

function Row({ label, children }: { label: string; children: React.ReactNode }) {
  return (
    <div className="grid grid-cols-[8.5rem_1fr] gap-2 border-t border-rule py-1.5 first:border-t-0">
      <dt className="text-xs font-semibold tracking-wide text-muted uppercase">{label}</dt>
      <dd className="min-w-0 break-words text-sm">{children}</dd>
    </div>
  );
}

/** One revision with its provenance: value as kept and as typed, uncertainty, method, source with locator, people, notes. */
export function RevisionCard({ title, revision, tone, emptyText }: { title: string; revision: RevisionView | null; tone: "current" | "proposed" | "base"; emptyText: string }) {
  const retirement = revision?.kind === "retirement";
  const border = tone === "proposed" ? "border-t-copper" : tone === "current" ? "border-t-teal" : "border-t-rule";
  return (
    <section className={`card border-t-4 ${border} p-4`} aria-label={title}>
      <h3 className="label">{title}</h3>
      {!revision ? (
        <p className="mt-3 text-sm text-muted">{emptyText}</p>
      ) : (
        <dl className="mt-2">
          <Row label="Value">
            {retirement ? (
              <span className="font-medium text-fail">retired</span>
            ) : (
              <span className="text-base" data-testid={`${tone}-value`}>
                <ValueWithUnit value={revision.value} unit={revision.unit} />
                {revision.inputValue && revision.inputUnit && (revision.inputUnit !== revision.unit || revision.inputValue !== revision.value) ? (
                  <span className="ml-2 text-xs text-muted">typed as {revision.inputValue} {revision.inputUnit}</span>
                ) : null}
                {revision.significantDigits ? <span className="ml-2 text-xs text-muted">{revision.significantDigits} significant digits</span> : null}
              </span>
            )}
          </Row>
          {!retirement ? (
            <>
              <Row label="Uncertainty"><UncertaintyText uncertainty={revision.uncertainty} unit={revision.unit} /></Row>
              <Row label="Method">{methodLabel(revision.method)}</Row>
            </>
          ) : null}
          <Row label="Source">
            {revision.source ? <SourceReference source={revision.source} /> : <span className="text-muted">no source</span>}
            {revision.locator ? <span className="block text-muted">at {revision.locator}</span> : null}
          </Row>
          {revision.validFromK !== null || revision.validToK !== null ? (
            <Row label="Fit range">{revision.validFromK ?? "?"}–{revision.validToK ?? "?"} K</Row>
          ) : null}
          {revision.potentialCoefficients?.length ? (
            <Row label="Potential">
              <span className="figure font-mono">{revision.potentialCoefficients.map((c) => `U${c.n} = ${c.valueEv} eV`).join(", ")}</span>
              {revision.periodAngstrom ? <span className="text-muted"> · period a = {revision.periodAngstrom} Å</span> : null}
            </Row>
          ) : null}
          <Row label={retirement ? "Reason" : "Notes"}>{revision.notes ?? <span className="text-muted">none</span>}</Row>
          <Row label="People">
            {revision.proposedBy ? `proposed by ${revision.proposedBy}` : "—"}
            {revision.proposedAt ? ` on ${formatDay(revision.proposedAt)}` : ""}
            {revision.approvedBy ? `; approved by ${revision.approvedBy}${revision.approvedAt ? ` on ${formatDay(revision.approvedAt)}` : ""}` : ""}
          </Row>
          {revision.seq !== null ? <Row label="Revision">{`#${revision.seq} (id ${revision.id})`}</Row> : null}
        </dl>
      )}
    </section>
  );
}

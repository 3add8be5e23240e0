import type { RevisionView } from "~/domain/revision-view";
import { displayUnit } from "~/domain/units";
import { formatDay, methodLabel, UncertaintyText } from "./format";
import { SourceLink } from "./source-link";

export function typedInput(r: Pick<RevisionView, "inputValue" | "inputUnit">): string | null {
  if (r.inputValue === null) return null;
  const unit = r.inputUnit ? displayUnit(r.inputUnit) : "";
  return unit ? `${r.inputValue} ${unit}` : r.inputValue;
}

export function fitRangeText(r: Pick<RevisionView, "validFromK" | "validToK">): string | null {
  if (r.validFromK === null && r.validToK === null) return null;
  return `${r.validFromK ?? "…"}–${r.validToK ?? "…"} K`;
}

export function coefficientsText(r: Pick<RevisionView, "potentialCoefficients" | "periodAngstrom">): string | null {
  if (!r.potentialCoefficients?.length) return null;
  const list = r.potentialCoefficients.map((c) => `U${c.n} = ${c.valueEv} eV`).join(", ");
  return r.periodAngstrom ? `${list}; period a = ${r.periodAngstrom} Å` : list;
}

/** Where a revision came from: method, source and locator, who proposed and approved it when, what was typed, notes. */
export function Provenance({ revision: r, unit }: { revision: RevisionView; unit: string }) {
  const typed = typedInput(r);
  const fit = fitRangeText(r);
  const coefficients = coefficientsText(r);
  return (
    <dl className="grid grid-cols-[max-content_1fr] gap-x-3 gap-y-1 text-sm [&_dt]:text-muted">
      {r.kind === "value" ? (
        <>
          <dt>Method</dt>
          <dd>{methodLabel(r.method)}</dd>
          <dt>Uncertainty</dt>
          <dd><UncertaintyText uncertainty={r.uncertainty} unit={unit} /></dd>
        </>
      ) : null}
      <dt>Source</dt>
      <dd><SourceLink source={r.source} locator={r.locator} /></dd>
      {typed ? (
        <>
          <dt>As entered</dt>
          <dd><span className="figure font-mono">{typed}</span>{r.significantDigits ? <span className="text-muted"> · {r.significantDigits} significant digits</span> : null}</dd>
        </>
      ) : null}
      {fit ? (
        <>
          <dt>Fit valid</dt>
          <dd className="figure">{fit}</dd>
        </>
      ) : null}
      {coefficients ? (
        <>
          <dt>Potential</dt>
          <dd className="figure font-mono text-xs">{coefficients}</dd>
        </>
      ) : null}
      <dt>Proposed</dt>
      <dd>{r.proposedBy ?? "—"}, <span className="figure">{formatDay(r.proposedAt)}</span></dd>
      <dt>Approved</dt>
      <dd>{r.approvedBy ?? "—"}, <span className="figure">{formatDay(r.approvedAt)}</span></dd>
      {r.notes ? (
        <>
          <dt>Notes</dt>
          <dd className="max-w-prose">{r.notes}</dd>
        </>
      ) : null}
    </dl>
  );
}

import type { ReactNode } from "react";
import type { CheckInput, CheckReport, CheckResult, NfeDetail } from "~/domain/check-report";
import type { EpmDetail } from "~/domain/check-report/epm";
import { exact, readable, recordHref, smallFigure, withUnit } from "./format";
import { NfePlot } from "./nfe-plot";
import { VerdictBadge } from "./verdict-badge";

const KIND_LABEL: Record<CheckResult["kind"], string> = {
  range: "range",
  nfe: "nearly-free-electron",
  varshni: "Varshni",
  kane: "Kane",
  bowing: "bowing",
  epm: "pseudopotential",
};

function InputItem({ input, origin }: { input: CheckInput; origin: CheckReport["origin"] }) {
  const owner = input.material ? `${input.material} ` : "";
  const where =
    input.from === "default" ? (
      <span className="text-muted">default</span>
    ) : input.from === "subject" && origin === "proposal" ? (
      <span className="text-muted">this proposal</span>
    ) : input.recordId !== null ? (
      <a href={recordHref(input.recordId)} title={input.sourceLabel ?? undefined}>
        {input.revisionId !== null ? `rev. ${input.revisionId}` : `record ${input.recordId}`}
      </a>
    ) : null;
  return (
    <li className="whitespace-nowrap">
      <span className="text-muted">{owner}</span>
      <span className="font-mono">{input.symbol}</span> = <span className="figure font-mono">{withUnit(exact(input.value), input.unit)}</span>
      {where ? <> ({where})</> : null}
    </li>
  );
}

function NfeComparison({ nfe, stated }: { nfe: NfeDetail; stated: string | null }) {
  const rows = [
    { label: "first order 2|U_1|", gap: nfe.firstOrder.gapEv, lower: nfe.firstOrder.lowerEv, upper: nfe.firstOrder.upperEv },
    { label: `central equation, ${nfe.centralEquation.planeWaves} plane waves${nfe.centralEquation.converged ? "" : " (not converged)"}`, gap: nfe.centralEquation.gapEv, lower: nfe.centralEquation.lowerEv, upper: nfe.centralEquation.upperEv },
  ];
  return (
    <div className="mt-3 grid gap-3 lg:grid-cols-[minmax(0,1fr)_minmax(0,1.1fr)]">
      <table className="h-fit w-full text-left text-sm" aria-label="First order against the central equation">
        <thead className="text-xs text-muted">
          <tr>
            <th className="py-1 pr-2 font-medium">gap (eV)</th>
            <th className="px-2 text-right font-medium">Eg</th>
            <th className="px-2 text-right font-medium">lower edge</th>
            <th className="pl-2 text-right font-medium">upper edge</th>
          </tr>
        </thead>
        <tbody className="figure font-mono">
          {stated !== null ? (
            <tr className="border-t border-rule">
              <td className="py-1 pr-2 font-sans">stated</td>
              <td className="px-2 text-right">{exact(stated)}</td>
              <td className="px-2 text-right text-muted">—</td>
              <td className="pl-2 text-right text-muted">—</td>
            </tr>
          ) : null}
          {rows.map((r) => (
            <tr key={r.label} className="border-t border-rule">
              <td className="py-1 pr-2 font-sans">{r.label}</td>
              <td className="px-2 text-right">{readable(r.gap)}</td>
              <td className="px-2 text-right">{readable(r.lower)}</td>
              <td className="pl-2 text-right">{readable(r.upper)}</td>
            </tr>
          ))}
        </tbody>
        <tfoot>
          <tr>
            <td colSpan={4} className="pt-1 text-xs text-muted">
              a = {nfe.periodAngstrom} Å ({nfe.periodFrom === "revision" ? "stated with the coefficients" : "the material's lattice constant"}), m = {nfe.massM0} m₀, gap {nfe.gapIndex} at k = {nfe.kPiOverA === 1 ? "π/a" : "0"}
            </td>
          </tr>
        </tfoot>
      </table>
      <NfePlot
        width={520}
        height={300}
        input={{
          periodAngstrom: Number(nfe.periodAngstrom),
          coefficients: nfe.coefficients.map((c) => ({ n: c.n, energyEv: Number(c.valueEv) })),
          massM0: Number(nfe.massM0),
          gapIndex: nfe.gapIndex,
          gap: { lowerEv: Number(nfe.centralEquation.lowerEv), upperEv: Number(nfe.centralEquation.upperEv), kPiOverA: nfe.kPiOverA },
        }}
      />
    </div>
  );
}

// The crystal the pseudopotential check computed, and a way to its band structure on the crystal check page.
function EpmCrystal({ epm }: { epm: EpmDetail }) {
  return (
    <p className="mt-1 text-sm" data-epm-detail>
      <span className="text-muted">computed </span>
      <span className="figure font-mono">
        Eg(Γ) {readable(epm.gaps.gamma)} · Eg(X) {readable(epm.gaps.x)} · Eg(L) {readable(epm.gaps.l)} eV
      </span>
      <span className="text-muted">; fundamental </span>
      <span className="figure font-mono">{readable(epm.fundamental.gapEv)} eV ({epm.fundamental.valley})</span>
      <span className="text-muted">; {epm.planeWaves} plane waves{epm.converged ? "" : ", not converged"} · </span>
      <a href={`/checks/epm?${epm.query}`}>band structure in the crystal check</a>
    </p>
  );
}

function Summary({ result }: { result: CheckResult }) {
  const parts: ReactNode[] = [];
  if (result.stated) parts.push(<span key="s">{result.stated.label} <b className="figure font-mono font-medium">{withUnit(exact(result.stated.value), result.stated.unit)}</b></span>);
  const computed = result.computed[result.kind === "nfe" ? 1 : 0];
  if (computed) parts.push(<span key="c">{computed.label} <b className="figure font-mono font-medium">{withUnit(readable(computed.value), computed.unit)}</b></span>);
  if (result.residual) parts.push(<span key="r">residual <b className="figure font-mono font-medium">{smallFigure(result.residual, true)}</b></span>);
  if (result.tolerance) parts.push(<span key="t" className="text-muted">tolerance {smallFigure(result.tolerance)}</span>);
  return <p className="flex flex-wrap gap-x-4 gap-y-0.5 text-sm">{parts}</p>;
}

function ResultItem({ result, origin, plot }: { result: CheckResult; origin: CheckReport["origin"]; plot: boolean }) {
  return (
    <li className="py-3" data-check={result.kind} data-verdict={result.status}>
      <div className="flex flex-wrap items-center gap-x-3 gap-y-1">
        <VerdictBadge status={result.status} />
        <h3 className="font-semibold">{result.title}</h3>
      </div>
      <div className="mt-1 pl-0 sm:pl-[5.25rem]">
        <Summary result={result} />
        {result.notes.length ? (
          <ul className="mt-1 list-disc pl-5 text-sm text-muted">
            {result.notes.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
        ) : null}
        {result.nfe && plot ? <NfeComparison nfe={result.nfe} stated={result.stated?.value ?? null} /> : null}
        {result.epm ? <EpmCrystal epm={result.epm} /> : null}
        <div className="mt-2 space-y-1 text-xs">
          <p>
            <span className="text-muted">formula </span>
            <span className="font-mono">{result.formula}</span>
            <span className="text-muted"> · {result.reference}</span>
          </p>
          <ul className="flex flex-wrap gap-x-3 gap-y-0.5" aria-label={`Inputs of the ${KIND_LABEL[result.kind]} check`}>
            {result.inputs.map((input, i) => (
              <InputItem key={`${input.symbol}-${i}`} input={input} origin={origin} />
            ))}
          </ul>
        </div>
      </div>
    </li>
  );
}

/**
 * A check report at a glance: the overall verdict, then each check with its badge, stated against computed,
 * residual and tolerance, notes, formula and inputs (linked to the revisions they came from); the
 * nearly-free-electron check with first order beside the central equation and its E(k) plot.
 */
export function CheckReportView({
  report,
  message = null,
  title = "Consistency checks",
  plot = true,
  busy = false,
}: {
  report: CheckReport | null;
  message?: string | null;
  title?: string;
  plot?: boolean;
  busy?: boolean;
}) {
  return (
    <section className="card p-4" aria-label={title} data-check-report={report?.status ?? "none"} aria-busy={busy || undefined}>
      <div className="flex flex-wrap items-center gap-3">
        <h2 className="text-lg font-semibold">{title}</h2>
        <VerdictBadge status={report?.status ?? "none"} large />
        {report ? <span className="text-sm text-muted">{report.subject.label}</span> : null}
        {busy ? <span className="ml-auto text-xs text-muted">checking…</span> : null}
      </div>
      {message ? <p className="mt-2 text-sm text-muted">{message}</p> : null}
      {report && report.results.length ? (
        <ul className="mt-1 divide-y divide-rule">
          {report.results.map((r) => (
            <ResultItem key={r.id} result={r} origin={report.origin} plot={plot} />
          ))}
        </ul>
      ) : report && !message ? (
        <p className="mt-2 text-sm text-muted">No consistency check applies to this value.</p>
      ) : null}
      {report?.results.some((r) => r.kind === "epm") ? (
        <p className="mt-2 rounded-[var(--radius-card)] border border-warn px-3 py-2 text-sm" data-epm-caution>
          A local three-form-factor model reproduces the main gaps to about 0.1–0.3 eV (it is fitted to a few transitions), hence the wide tolerance:
          it checks that form factors and gaps belong together, and does not replace measured values.
        </p>
      ) : null}
      {report && report.notRun.length ? (
        <div className="mt-2 border-t border-rule pt-2 text-sm">
          <p className="label">Not run</p>
          <ul className="mt-1 list-disc pl-5 text-muted">
            {report.notRun.map((n) => (
              <li key={`${n.kind}-${n.reason}`}>{n.reason}</li>
            ))}
          </ul>
        </div>
      ) : null}
      {report ? (
        <p className="mt-3 text-xs text-muted">
          Constants {report.codataEdition}. A check passes within its tolerance; the nearly-free-electron, Kane, bowing and pseudopotential checks warn up to three times it, the Varshni check fails beyond it. Tolerances are set by an admin.
        </p>
      ) : null}
    </section>
  );
}

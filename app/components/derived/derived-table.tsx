import type { EvaluatedValue } from "~/domain/derived";
import { toDecimalString } from "~/domain/decimal";
import { exact, readable, recordHref, withUnit } from "~/components/checks/format";
import { displayUnit } from "~/domain/units";

const MINUS = "\u2212";

/**
 * A value with its combined standard uncertainty as usually quoted (JCGM 100, 7.2.6): the uncertainty to two
 * significant digits and the value to the same decimal place; without one, six significant digits.
 */
export function valueWithUncertainty(value: string, standard: string | null): { value: string; uncertainty: string | null } {
  const v = Number(value);
  const u = standard === null ? null : Number(standard);
  if (u === null || !(u > 0) || !Number.isFinite(v)) return { value: readable(value), uncertainty: standard === null ? null : readable(standard, 2) };
  const places = Math.max(0, 1 - Math.floor(Math.log10(u)));
  return { value: v.toFixed(places).replace("-", MINUS), uncertainty: toDecimalString(u, 2) };
}

function Uncertainty({ item }: { item: EvaluatedValue }) {
  if (item.uncertaintyStatus === "not-stated") {
    return <span className="block text-xs text-muted" data-uncertainty="not-stated">± not stated</span>;
  }
  const shown = valueWithUncertainty(item.value, item.standardUncertainty);
  return (
    <span className="block text-xs" data-uncertainty={item.uncertaintyStatus}>
      u = <span className="figure font-mono">{shown.uncertainty}</span> {displayUnit(item.unit)}
      {item.uncertaintyStatus === "partial" ? <span className="text-warn"> (from the inputs that state one; {item.uncertaintyNotStated.join(", ")}: not stated)</span> : null}
    </span>
  );
}

function Inputs({ item }: { item: EvaluatedValue }) {
  return (
    <ul className="space-y-0.5">
      {item.inputs.map((i, n) => (
        <li key={`${i.symbol}-${n}`} className="whitespace-nowrap">
          {i.material ? <span className="text-muted">{i.material} </span> : null}
          <span className="font-mono">{i.symbol}</span> = <span className="figure font-mono">{withUnit(exact(i.value), i.unit)}</span>
          <span className="text-muted"> ± {i.uncertainty === null ? "not stated" : exact(i.uncertainty)}</span>
          {i.recordId !== null ? (
            <>
              {" "}
              (<a href={recordHref(i.recordId)} title={i.source ?? undefined}>rev. {i.revisionId}</a>)
            </>
          ) : null}
        </li>
      ))}
    </ul>
  );
}

function Row({ item }: { item: EvaluatedValue }) {
  const shown = valueWithUncertainty(item.value, item.standardUncertainty);
  return (
    <tr className="border-t border-rule align-top" data-derived={item.id}>
      <th scope="row" className="py-2 pr-3 text-left font-mono font-medium whitespace-nowrap">{item.label}</th>
      <td className="px-3 py-2 text-right whitespace-nowrap">
        <span className="figure font-mono text-base font-semibold" title={`${item.value} ${item.unit}`}>
          {shown.value}
          {shown.uncertainty !== null ? <span className="font-normal text-muted"> ± {shown.uncertainty}</span> : null}
        </span>{" "}
        {displayUnit(item.unit)}
        <Uncertainty item={item} />
        {item.stated ? (
          <span className="block text-xs text-muted">
            stated{" "}
            {item.stated.recordId !== null ? <a href={recordHref(item.stated.recordId)}>{exact(item.stated.value)}</a> : exact(item.stated.value)}
            {" ± "}{item.stated.uncertainty === null ? "not stated" : exact(item.stated.uncertainty)}
          </span>
        ) : null}
      </td>
      <td className="px-3 py-2 text-xs">
        <span className="font-mono">{item.formula}</span>
        <span className="block text-muted">{item.reference}</span>
        {item.warnings.map((w) => (
          <span key={w} className="block text-warn">{w}</span>
        ))}
      </td>
      <td className="py-2 pl-3 text-xs">
        <Inputs item={item} />
      </td>
    </tr>
  );
}

/**
 * Derived values with their GUM uncertainty, formula and the revisions they came from (each with its own stated
 * uncertainty, or "not stated"): the material page's derived values and a release evaluation use this one table.
 */
export function DerivedTable({ items, label }: { items: readonly EvaluatedValue[]; label: string }) {
  return (
    <div className="overflow-x-auto">
      <table className="w-full text-sm" aria-label={label}>
        <thead className="text-left text-xs text-muted">
          <tr>
            <th className="py-1 pr-3 font-medium">quantity</th>
            <th className="px-3 text-right font-medium">value ± standard uncertainty</th>
            <th className="px-3 font-medium">formula</th>
            <th className="pl-3 font-medium">from</th>
          </tr>
        </thead>
        <tbody>
          {items.map((item) => (
            <Row key={item.id} item={item} />
          ))}
        </tbody>
      </table>
    </div>
  );
}

import type { StoredRevisionView } from "~/domain/revision-view";
import { displayUnit } from "~/domain/units";
import { formatDay, methodLabel } from "./format";
import { coefficientsText, fitRangeText, typedInput } from "./provenance";

type Field = { label: string; text: (r: StoredRevisionView) => string };

function fields(unit: string): Field[] {
  const u = displayUnit(unit);
  const withUnit = (v: string | null) => (v === null ? "—" : u ? `${v} ${u}` : v);
  return [
    { label: "Value", text: (r) => (r.kind === "retirement" ? "retired" : withUnit(r.value)) },
    { label: "Significant digits", text: (r) => (r.significantDigits === null ? "—" : String(r.significantDigits)) },
    { label: "As entered", text: (r) => typedInput(r) ?? "—" },
    { label: "Uncertainty", text: (r) => (r.uncertainty === null ? "not stated" : `± ${withUnit(r.uncertainty)}`) },
    { label: "Method", text: (r) => methodLabel(r.method) },
    { label: "Source", text: (r) => (r.source ? `${r.source.label} — ${r.source.title}` : "—") },
    { label: "Locator", text: (r) => r.locator ?? "—" },
    { label: "Fit valid", text: (r) => fitRangeText(r) ?? "—" },
    { label: "Potential coefficients", text: (r) => coefficientsText(r) ?? "—" },
    { label: "Notes", text: (r) => r.notes ?? "—" },
    { label: "Proposed", text: (r) => `${r.proposedBy ?? "—"}, ${formatDay(r.proposedAt)}` },
    { label: "Approved", text: (r) => `${r.approvedBy ?? "—"}, ${formatDay(r.approvedAt)}` },
    { label: "State", text: (r) => r.state },
  ];
}

/** Two revisions of one record side by side; rows that differ are marked, in words as well as colour. */
export function RevisionDiff({ from, to, unit }: { from: StoredRevisionView; to: StoredRevisionView; unit: string }) {
  const rows = fields(unit).map((f) => ({ label: f.label, a: f.text(from), b: f.text(to) }));
  const changed = rows.filter((r) => r.a !== r.b).length;
  return (
    <div className="mt-3 overflow-x-auto rounded border border-rule" data-testid="revision-diff">
      <table className="w-full border-collapse text-sm">
        <caption className="bg-paper px-3 py-2 text-left font-semibold">
          Revision {from.seq} compared with revision {to.seq}: {changed === 0 ? "no field differs" : `${changed} field${changed === 1 ? "" : "s"} differ`}
        </caption>
        <thead>
          <tr className="border-b border-rule text-left">
            <th scope="col" className="w-44 px-3 py-1.5">Field</th>
            <th scope="col" className="px-3 py-1.5">Revision {from.seq} <span className="font-normal text-muted">({formatDay(from.approvedAt)})</span></th>
            <th scope="col" className="px-3 py-1.5">Revision {to.seq} <span className="font-normal text-muted">({formatDay(to.approvedAt)})</span></th>
          </tr>
        </thead>
        <tbody>
          {rows.map((r) => {
            const differs = r.a !== r.b;
            return (
              <tr key={r.label} className={`border-b border-rule last:border-b-0 ${differs ? "bg-copper-soft/60" : ""}`} data-changed={differs ? "true" : undefined}>
                <th scope="row" className={`px-3 py-1.5 text-left font-medium ${differs ? "border-l-4 border-copper" : "border-l-4 border-transparent"}`}>
                  {r.label}
                  {differs ? <span className="ml-2 text-xs font-semibold text-copper">changed</span> : null}
                </th>
                <td className="figure px-3 py-1.5 align-top">{r.a}</td>
                <td className="figure px-3 py-1.5 align-top">{r.b}</td>
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}

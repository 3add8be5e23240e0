import type { StoredRevisionView } from "~/domain/revision-view";
import { formatDay, StateBadge, ValueWithUnit } from "./format";
import { RevisionDiff } from "./revision-diff";
import { SourceLink } from "./source-link";

export type CompareSelection = { from: number; to: number } | null;

/**
 * A record's revisions, newest first, with a GET form that picks any two (two radio groups) and shows them side
 * by side. A plain form, so comparing works without JavaScript and the address can be shared.
 */
export function RevisionHistory({ recordId, revisions, unit, action, selection }: { recordId: number; revisions: StoredRevisionView[]; unit: string; action: string; selection: CompareSelection }) {
  const from = selection && revisions.find((r) => r.id === selection.from);
  const to = selection && revisions.find((r) => r.id === selection.to);
  const defaultFrom = from?.id ?? revisions[1]?.id ?? revisions[0]?.id;
  const defaultTo = to?.id ?? revisions[0]?.id;
  const canCompare = revisions.length > 1;
  return (
    <div>
      <form method="get" action={`${action}#record-${recordId}`} aria-label={`Compare revisions of record ${recordId}`}>
        <input type="hidden" name="cmp" value={recordId} />
        <table className="w-full border-collapse text-sm [&_td]:px-2 [&_td]:py-1 [&_th]:px-2 [&_th]:py-1">
          <caption className="sr-only">Revisions of record {recordId}, newest first</caption>
          <thead>
            <tr className="border-b border-rule text-left text-xs text-muted uppercase">
              {canCompare ? (
                <>
                  <th scope="col">From</th>
                  <th scope="col">To</th>
                </>
              ) : null}
              <th scope="col">Rev</th>
              <th scope="col">Value</th>
              <th scope="col">State</th>
              <th scope="col">Source</th>
              <th scope="col">Approved</th>
            </tr>
          </thead>
          <tbody>
            {revisions.map((r) => (
              <tr key={r.id} className="border-t border-rule">
                {canCompare ? (
                  <>
                    <td>
                      <input type="radio" name="from" value={r.id} defaultChecked={r.id === defaultFrom} aria-label={`Compare from revision ${r.seq}`} />
                    </td>
                    <td>
                      <input type="radio" name="to" value={r.id} defaultChecked={r.id === defaultTo} aria-label={`Compare to revision ${r.seq}`} />
                    </td>
                  </>
                ) : null}
                <td className="figure">{r.seq}</td>
                <td>{r.kind === "retirement" ? <span className="text-fail">retirement</span> : <ValueWithUnit value={r.value} unit={unit} />}</td>
                <td><StateBadge state={r.state} /></td>
                <td><SourceLink source={r.source} locator={r.locator} /></td>
                <td className="whitespace-nowrap"><span className="figure">{formatDay(r.approvedAt)}</span> <span className="text-muted">{r.approvedBy}</span></td>
              </tr>
            ))}
          </tbody>
        </table>
        {canCompare ? (
          <button type="submit" className="btn mt-2">Compare the two selected revisions</button>
        ) : (
          <p className="mt-2 text-xs text-muted">One revision so far: nothing to compare yet.</p>
        )}
      </form>
      {from && to ? <RevisionDiff from={from} to={to} unit={unit} /> : null}
    </div>
  );
}

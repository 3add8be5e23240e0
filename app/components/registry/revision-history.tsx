import { FieldError, invalidProps } from "~/components/field-error";
import type { StoredRevisionView } from "~/domain/revision-view";
import { defaultRevisionPair, pairIsShown, type RevisionPair } from "~/domain/revision-pair";
import { formatDay, StateBadge, ValueWithUnit } from "./format";
import { RevisionDiff } from "./revision-diff";
import { SourceLink } from "./source-link";

/**
 * A record's revisions, newest first, under a small GET form of two selects ("Show revision n beside revision m")
 * that puts any two side by side. A plain form, so it works without JavaScript and the address can be shared;
 * `pair` is what the address asked for (null when it asked nothing of this record).
 */
export function RevisionHistory({ recordId, revisions, unit, action, pair }: { recordId: number; revisions: StoredRevisionView[]; unit: string; action: string; pair: RevisionPair | null }) {
  const fallback = defaultRevisionPair(revisions);
  const fromId = pair?.from ?? fallback.from;
  const toId = pair?.to ?? fallback.to;
  const shown = pair && pairIsShown(pair) ? { from: revisions.find((r) => r.id === pair.from)!, to: revisions.find((r) => r.id === pair.to)! } : null;
  const base = `record-${recordId}-pick`;
  const options = revisions.map((r) => (
    <option key={r.id} value={r.id}>
      {r.seq} · {r.kind === "retirement" ? "retirement" : r.state}
    </option>
  ));
  return (
    <div>
      {revisions.length > 1 ? (
        <form
          key={`${fromId}-${toId}`}
          method="get"
          action={`${action}#record-${recordId}`}
          aria-label={`Show two revisions of record ${recordId} side by side`}
          className="mb-3 flex flex-wrap items-start gap-x-3 gap-y-2 text-sm"
        >
          <input type="hidden" name="cmp" value={recordId} />
          <div className="max-w-64">
            <label htmlFor={`${base}-from`} className="mr-1.5">Show revision</label>
            <select id={`${base}-from`} name="from" defaultValue={fromId ?? undefined} className="field inline-block w-auto" {...invalidProps(`${base}-from-error`, pair?.errors.from)}>
              {options}
            </select>
            <FieldError id={`${base}-from-error`} message={pair?.errors.from} />
          </div>
          <div className="max-w-64">
            <label htmlFor={`${base}-to`} className="mr-1.5">beside revision</label>
            <select id={`${base}-to`} name="to" defaultValue={toId ?? undefined} className="field inline-block w-auto" {...invalidProps(`${base}-to-error`, pair?.errors.to)}>
              {options}
            </select>
            <FieldError id={`${base}-to-error`} message={pair?.errors.to} />
          </div>
          <button type="submit" className="btn">Show side by side</button>
        </form>
      ) : (
        <p className="mb-2 text-xs text-muted">One revision so far: nothing to set beside it yet.</p>
      )}
      {shown ? <RevisionDiff from={shown.from} to={shown.to} unit={unit} /> : null}
      <table className="mt-3 w-full border-collapse text-sm [&_td]:px-2 [&_td]:py-1 [&_th]:px-2 [&_th]:py-1">
        <caption className="sr-only">Revisions of record {recordId}, newest first</caption>
        <thead>
          <tr className="border-b border-rule text-left text-xs text-muted uppercase">
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
              <td className="figure">{r.seq}</td>
              <td>{r.kind === "retirement" ? <span className="text-fail">retirement</span> : <ValueWithUnit value={r.value} unit={unit} />}</td>
              <td><StateBadge state={r.state} /></td>
              <td><SourceLink source={r.source} locator={r.locator} /></td>
              <td className="whitespace-nowrap"><span className="figure">{formatDay(r.approvedAt)}</span> <span className="text-muted">{r.approvedBy}</span></td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

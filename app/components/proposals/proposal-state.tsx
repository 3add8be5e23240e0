import type { ProposalState } from "~/domain/proposal-schemas";

const STYLE: Record<ProposalState, string> = {
  draft: "border-rule text-muted",
  submitted: "border-teal text-teal",
  approved: "border-pass text-pass",
  rejected: "border-fail text-fail",
  withdrawn: "border-rule text-muted line-through",
};

const LABEL: Record<ProposalState, string> = {
  draft: "draft",
  submitted: "waiting for a decision",
  approved: "approved",
  rejected: "rejected",
  withdrawn: "withdrawn",
};

export function ProposalStateBadge({ state }: { state: ProposalState }) {
  return <span className={`inline-block rounded border px-1.5 py-0.5 text-xs font-medium whitespace-nowrap ${STYLE[state]}`}>{LABEL[state]}</span>;
}

export function StaleBadge() {
  return <span className="inline-block rounded border border-warn px-1.5 py-0.5 text-xs font-medium whitespace-nowrap text-warn">stale: carry forward</span>;
}

/** Age of a proposal against the page's own clock, so server and browser render the same text. */
export function ageText(fromIso: string, nowIso: string): string {
  const minutes = Math.max(0, Math.floor((Date.parse(nowIso) - Date.parse(fromIso)) / 60_000));
  if (minutes < 60) return `${minutes} min`;
  const hours = Math.floor(minutes / 60);
  if (hours < 48) return `${hours} h`;
  return `${Math.floor(hours / 24)} d`;
}

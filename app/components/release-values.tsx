import type { ReleaseItem } from "~/domain/release-format";
import { VALLEY_LABELS } from "~/domain/quantities";
import { displayUnit } from "~/domain/units";
import { doiUrl } from "~/domain/citations";

type Conditions = Pick<ReleaseItem, "valley" | "composition" | "temperatureK" | "temperatureKind">;

/** "Γ · x = 0.3 · 300 K", "0 K fit", "T-independent". */
export function conditionText(item: Conditions): string {
  const parts = [
    item.valley ? VALLEY_LABELS[item.valley] : null,
    item.composition !== null ? `x = ${item.composition}` : null,
    item.temperatureK !== null ? `${item.temperatureK} K` : item.temperatureKind === "fit0" ? "0 K fit" : "T-independent",
  ];
  return parts.filter(Boolean).join(" · ");
}

export function ValueText({ item }: { item: Pick<ReleaseItem, "value" | "unit" | "uncertainty"> }) {
  const unit = displayUnit(item.unit);
  return (
    <span className="figure font-mono">
      {item.value}
      {item.uncertainty ? <span className="text-muted"> ± {item.uncertainty}</span> : null}
      {unit ? <span className="text-muted"> {unit}</span> : null}
    </span>
  );
}

export function SourceText({ item }: { item: Pick<ReleaseItem, "source" | "locator"> }) {
  const s = item.source;
  if (!s) return <span className="text-muted">no source</span>;
  const label = s.doi ? (
    <a href={doiUrl(s.doi)} rel="noreferrer">doi:{s.doi}</a>
  ) : (
    <span className="font-mono">{s.bibtexKey ?? s.reportNumber ?? s.title}</span>
  );
  return (
    <span>
      {label}
      {item.locator ? <span className="text-muted">, {item.locator}</span> : null}
      <span className="block text-xs text-muted">{s.title}</span>
    </span>
  );
}

const MARKS = {
  new: { text: "new", className: "bg-teal-soft text-teal" },
  changed: { text: "changed", className: "bg-copper-soft text-copper" },
  retired: { text: "retired", className: "bg-copper-soft text-fail" },
  unchanged: { text: "unchanged", className: "text-muted" },
} as const;

export function SinceMark({ since }: { since: keyof typeof MARKS | null }) {
  if (!since) return <span className="text-xs text-muted">not released yet</span>;
  const m = MARKS[since];
  return <span className={`rounded px-1.5 py-0.5 text-xs font-medium ${m.className}`}>{m.text}</span>;
}

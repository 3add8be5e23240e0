import type { Verdict } from "~/domain/check-report";

const LOOK: Record<Verdict, { mark: string; text: string; className: string }> = {
  pass: { mark: "✓", text: "pass", className: "border-pass text-pass" },
  warn: { mark: "!", text: "warn", className: "border-warn text-warn" },
  fail: { mark: "✗", text: "fail", className: "border-fail text-fail" },
  none: { mark: "–", text: "not checked", className: "border-rule text-muted" },
};

/** A verdict as a small outlined badge; the mark and the word carry it without colour. */
export function VerdictBadge({ status, large = false }: { status: Verdict; large?: boolean }) {
  const look = LOOK[status];
  return (
    <span
      data-verdict={status}
      className={`inline-flex shrink-0 items-center gap-1 rounded-full border bg-sheet font-semibold whitespace-nowrap ${look.className} ${large ? "px-2.5 py-0.5 text-sm" : "px-2 py-px text-xs"}`}
    >
      <span aria-hidden="true">{look.mark}</span>
      {look.text}
    </span>
  );
}

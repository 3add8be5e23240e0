// The product mark: two band edges with the gap between them, and a ledger rule.
export function BandMark({ className = "h-7 w-7" }: { className?: string }) {
  return (
    <svg viewBox="0 0 32 32" className={className} aria-hidden="true">
      <rect x="1" y="1" width="30" height="30" rx="5" fill="var(--color-ink)" />
      <path d="M6 10 Q16 4 26 10" stroke="var(--color-copper)" strokeWidth="3" fill="none" strokeLinecap="round" />
      <path d="M6 22 Q16 28 26 22" stroke="var(--color-teal-soft)" strokeWidth="3" fill="none" strokeLinecap="round" />
      <path d="M9 16 H23" stroke="var(--color-paper)" strokeWidth="1.5" strokeDasharray="2 2" />
    </svg>
  );
}

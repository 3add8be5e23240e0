import { normalisedDecimalKey } from "~/domain/exact-decimal";
import { describeTemperature, quantityByKey, VALLEY_LABELS, type Valley } from "~/domain/quantities";
import { METHOD_LABELS, type Method } from "~/domain/registry-schemas";
import { displayUnit } from "~/domain/units";

/** A day in UTC ("2026-01-14"), the same on the server and in every browser. */
export function formatDay(iso: string | null): string {
  return iso ? iso.slice(0, 10) : "—";
}

export function temperatureLabel(quantityKey: string, temperatureK: string | null): string {
  return describeTemperature(quantityByKey(quantityKey), temperatureK);
}

export function valleyLabel(valley: Valley | null): string {
  return valley ? VALLEY_LABELS[valley] : "—";
}

export function methodLabel(method: Method | null): string {
  return method ? METHOD_LABELS[method] : "—";
}

/** The conditions of a record in one line: "Γ · 300 K", "Γ · 0 K fit · x = 0.3". */
export function conditionsLabel(c: { quantityKey: string; valley: Valley | null; temperatureK: string | null; composition: string | null }): string {
  return [c.valley ? VALLEY_LABELS[c.valley] : null, temperatureLabel(c.quantityKey, c.temperatureK), c.composition !== null ? `x = ${normalisedDecimalKey(c.composition)}` : null]
    .filter(Boolean)
    .join(" · ");
}

/** A stored value as kept (exact decimal string) with its unit; dimensionless values say so. */
export function ValueWithUnit({ value, unit, className = "" }: { value: string | null; unit: string; className?: string }) {
  if (value === null) return <span className="text-muted">no value</span>;
  const shown = displayUnit(unit);
  return (
    <span className={`whitespace-nowrap ${className}`}>
      <span className="figure font-mono">{value}</span>{" "}
      {shown ? <span className="text-muted">{shown}</span> : <span className="text-xs text-muted">(dimensionless)</span>}
    </span>
  );
}

export function UncertaintyText({ uncertainty, unit, missing = "not stated" }: { uncertainty: string | null; unit: string; missing?: string }) {
  if (uncertainty === null) return <span className="text-muted">{missing}</span>;
  const shown = displayUnit(unit);
  return (
    <span className="whitespace-nowrap">
      ± <span className="figure font-mono">{uncertainty}</span>
      {shown ? ` ${shown}` : ""}
    </span>
  );
}

const STATE_STYLE = {
  current: "border-pass text-pass",
  superseded: "border-rule text-muted",
  retired: "border-fail text-fail",
} as const;

export function StateBadge({ state }: { state: keyof typeof STATE_STYLE }) {
  return <span className={`inline-block rounded border px-1.5 py-0.5 text-xs font-medium ${STATE_STYLE[state]}`}>{state}</span>;
}

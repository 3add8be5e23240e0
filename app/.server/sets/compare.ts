import { displayUnit } from "~/domain/units";
import { VALLEY_LABELS } from "~/domain/quantities";
import type { ReleaseItem } from "~/domain/release-format";
import { db } from "../db/client";
import type { Executor } from "../registry/executor";
import { SetError } from "./errors";
import { currentRowsOf, hasCurrentApprovedValue, toReleaseItem } from "./items";
import { itemsOfRelease, memberRecordIds, requireRelease, requireSet } from "./queries";

export type ComparisonEntry = { recordId: number; change: "added" | "removed" | "changed"; label: string; old: ReleaseItem | null; new: ReleaseItem | null };

export type Comparison = {
  set: { slug: string; name: string };
  from: { release: number; sha256: string };
  to: { release: number | "current"; sha256: string | null };
  added: ComparisonEntry[];
  removed: ComparisonEntry[];
  changed: ComparisonEntry[];
  unchanged: number;
};

/** "GaAs Eg (Γ, 300 K)", "AlGaAs Eg (Γ, x = 0.3, 300 K)", "GaAs α (Γ, 0 K fit)". */
export function itemLabel(item: Pick<ReleaseItem, "material" | "quantity" | "valley" | "composition" | "temperatureK" | "temperatureKind">): string {
  const conditions = [
    item.valley ? VALLEY_LABELS[item.valley] : null,
    item.composition !== null ? `x = ${item.composition}` : null,
    item.temperatureK !== null ? `${item.temperatureK} K` : item.temperatureKind === "fit0" ? "0 K fit" : null,
  ].filter(Boolean);
  return `${item.material.key} ${item.quantity.symbol}${conditions.length ? ` (${conditions.join(", ")})` : ""}`;
}

/** "1.519 eV ± 0.001" — a value as a reader reads it. */
export function formatItemValue(item: Pick<ReleaseItem, "value" | "unit" | "uncertainty">): string {
  const unit = displayUnit(item.unit);
  return `${item.value}${unit ? ` ${unit}` : ""}${item.uncertainty ? ` ± ${item.uncertainty}` : ""}`;
}

/** Added, removed and changed values between two lists of pinned items, matched by record. */
export function compareItems(from: ReleaseItem[], to: ReleaseItem[]): Pick<Comparison, "added" | "removed" | "changed" | "unchanged"> {
  const before = new Map(from.map((i) => [i.recordId, i]));
  const after = new Map(to.map((i) => [i.recordId, i]));
  const added: ComparisonEntry[] = [];
  const removed: ComparisonEntry[] = [];
  const changed: ComparisonEntry[] = [];
  let unchanged = 0;
  for (const item of to) {
    const old = before.get(item.recordId);
    if (!old) added.push({ recordId: item.recordId, change: "added", label: itemLabel(item), old: null, new: item });
    else if (old.revisionId !== item.revisionId) changed.push({ recordId: item.recordId, change: "changed", label: itemLabel(item), old, new: item });
    else unchanged++;
  }
  for (const item of from) {
    if (!after.has(item.recordId)) removed.push({ recordId: item.recordId, change: "removed", label: itemLabel(item), old: item, new: null });
  }
  return { added, removed, changed, unchanged };
}

/** What a freeze now would pin: the members' current approved values (retired members drop out). */
export async function currentItemsOfSet(setId: number, ex: Executor = db()): Promise<ReleaseItem[]> {
  const rows = await currentRowsOf(ex, await memberRecordIds(setId, ex));
  return rows.filter(hasCurrentApprovedValue).map(toReleaseItem);
}

/** Compares release `from` of a set with release `to`, or with the current registry. */
export async function compareSet(slug: string, fromNumber: number, to: number | "current", ex: Executor = db()): Promise<Comparison> {
  const set = await requireSet(slug, ex);
  if (to !== "current" && to === fromNumber) throw new SetError("invalid", "Choose two different releases to compare.", "to");
  const from = await requireRelease(set, fromNumber, ex);
  const target = to === "current" ? null : await requireRelease(set, to, ex);
  const toItems = target ? itemsOfRelease(target) : await currentItemsOfSet(set.id, ex);
  return {
    set: { slug: set.slug, name: set.name },
    from: { release: from.number, sha256: from.sha256 },
    to: { release: target ? target.number : "current", sha256: target?.sha256 ?? null },
    ...compareItems(itemsOfRelease(from), toItems),
  };
}

function sourceText(item: ReleaseItem | null): string {
  const s = item?.source;
  if (!s) return "no source";
  const id = s.doi ? `doi:${s.doi}` : s.bibtexKey ?? s.reportNumber ?? s.title;
  return item?.locator ? `${id}, ${item.locator}` : id;
}

/** Plain-text lines of a comparison, for e-mail: one line per value, old → new with sources. */
export function comparisonLines(c: Pick<Comparison, "added" | "removed" | "changed">): string[] {
  return [
    ...c.changed.map((e) => `changed ${e.label}: ${formatItemValue(e.old!)} → ${formatItemValue(e.new!)} (${sourceText(e.new)}; was ${sourceText(e.old)})`),
    ...c.added.map((e) => `added ${e.label}: ${formatItemValue(e.new!)} (${sourceText(e.new)})`),
    ...c.removed.map((e) => `removed ${e.label}: was ${formatItemValue(e.old!)} (${sourceText(e.old)})`),
  ];
}

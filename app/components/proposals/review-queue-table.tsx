import { createColumnHelper, createSortedRowModel, rowSortingFeature, sortFn_alphanumeric, sortFn_text, tableFeatures, useTable, type SortingState } from "@tanstack/react-table";
import { Link } from "react-router";
import { SortableTable } from "~/components/sortable-table";
import type { ReviewQueueRow } from "~/domain/proposal-schemas";
import { ageText, StaleBadge } from "./proposal-state";

const features = tableFeatures({ rowSortingFeature, sortedRowModel: createSortedRowModel(), sortFns: { alphanumeric: sortFn_alphanumeric, text: sortFn_text } });
const column = createColumnHelper<typeof features, ReviewQueueRow>();

export const QUEUE_SORTS = ["age", "material", "quantity", "author", "checks"] as const;
export type QueueSort = (typeof QUEUE_SORTS)[number];

// The queue is small (one lead's families), so the whole of it is sorted here, on the server and in the browser alike.
function columnsAt(nowIso: string) {
  return column.columns([
    column.accessor("submittedAt", {
      id: "age",
      header: "Age",
      sortFn: "text",
      sortDescFirst: false,
      cell: ({ row: { original: r } }) => <span className="figure whitespace-nowrap" title={r.submittedAt}>{ageText(r.submittedAt, nowIso)}</span>,
    }),
    column.accessor("material", {
      id: "material",
      header: "Material",
      sortFn: "alphanumeric",
      cell: ({ row: { original: r } }) => (
        <span>
          <span className="font-medium">{r.material}</span>
          <span className="block text-xs text-muted">{r.familyName}</span>
        </span>
      ),
    }),
    column.accessor("quantity", {
      id: "quantity",
      header: "Quantity",
      sortFn: "text",
      cell: ({ row: { original: r } }) => (
        <span>
          {r.quantity}
          <span className="block text-xs text-muted">{r.conditions}</span>
        </span>
      ),
    }),
    column.display({
      id: "change",
      header: "Current → proposed",
      cell: ({ row: { original: r } }) => (
        <Link to={`/proposals/${r.id}`} className="figure font-mono whitespace-nowrap no-underline" aria-label={`Proposal ${r.id}: ${r.current} to ${r.proposed}`}>
          <span className="text-muted">{r.current}</span> <span aria-hidden="true" className="text-copper">→</span> <span className="text-ink">{r.proposed}</span>
        </Link>
      ),
    }),
    column.accessor("author", {
      id: "author",
      header: "Author",
      sortFn: "text",
      cell: ({ row: { original: r } }) => (
        <span>
          {r.author}
          {r.own ? <span className="block text-xs text-muted">yours: another lead decides</span> : null}
        </span>
      ),
    }),
    column.accessor((r) => r.checkStatus ?? "", {
      id: "checks",
      header: "Checks",
      sortFn: "text",
      cell: ({ row: { original: r } }) => (
        <span className="flex flex-wrap gap-1">
          {r.checkStatus ? <span className="text-xs">{r.checkStatus}</span> : <span className="text-xs text-muted">not run</span>}
          {r.stale ? <StaleBadge /> : null}
        </span>
      ),
    }),
  ]);
}

export function ReviewQueueTable({ rows, sort, dir, nowIso, hrefFor }: { rows: ReviewQueueRow[]; sort: QueueSort; dir: "asc" | "desc"; nowIso: string; hrefFor: (sort: QueueSort, dir: "asc" | "desc") => string }) {
  const sorting: SortingState = [{ id: sort, desc: dir === "desc" }];
  const table = useTable({ features, columns: columnsAt(nowIso), data: rows, state: { sorting }, getRowId: (r) => String(r.id) });
  return (
    <SortableTable
      table={table}
      sorting={sorting}
      caption={`Proposals waiting for your decision, sorted by ${sort} (${dir === "desc" ? "descending" : "ascending"})`}
      sortTo={(id, direction) => ((QUEUE_SORTS as readonly string[]).includes(id) ? hrefFor(id as QueueSort, direction) : null)}
      preventScrollReset
      rowClassName="hover:bg-teal-soft/40"
      testId="review-queue"
    />
  );
}

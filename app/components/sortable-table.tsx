import type { ReactNode } from "react";
import { flexRender, type ReactTable, type RowData, type SortingState, type TableFeatures } from "@tanstack/react-table";
import { Link, type To } from "react-router";

export type SortDirection = "asc" | "desc";

/**
 * The frame of a table sorted by its headings: each sortable heading links to the same view sorted by it (ascending
 * first, then the other way), marks its direction with aria-sort and an arrow, and the rows render their cells.
 * The registry and the review queue share it; each brings its own columns and its own addresses. Cell padding and
 * row rules are set once on the table rather than on every cell.
 */
export function SortableTable<TFeatures extends TableFeatures, TData extends RowData>({
  table,
  sorting,
  caption,
  sortTo,
  preventScrollReset = false,
  rowClassName = "",
  testId,
  body,
}: {
  table: ReactTable<TFeatures, TData>;
  /** The order the rows are in (sorted on the server or by the table), which the headings show. */
  sorting: SortingState;
  caption: string;
  /** The address of the view sorted by this column in this direction; null for a column that does not sort. */
  sortTo: (columnId: string, direction: SortDirection) => To | null;
  preventScrollReset?: boolean;
  rowClassName?: string;
  testId?: string;
  /** The table's body written out by the caller, cells in the order of its columns; without it the row model renders. */
  body?: ReactNode;
}) {
  return (
    <div className="card overflow-x-auto">
      <table
        className="w-full border-collapse text-sm [&_td]:px-3 [&_td]:py-2 [&_td]:align-top [&_th]:px-3 [&_th]:py-2 [&_th]:font-semibold [&>tbody>tr]:border-b [&>tbody>tr]:border-rule [&>tbody>tr:last-child]:border-b-0"
        data-testid={testId}
      >
        <caption className="sr-only">{caption}</caption>
        <thead>
          {table.getHeaderGroups().map((group) => (
            <tr key={group.id} className="border-b border-rule bg-paper text-left">
              {group.headers.map((header) => {
                const by = sorting.find((s) => s.id === header.column.id);
                const sorted = by ? (by.desc ? "desc" : "asc") : false;
                const to = sortTo(header.column.id, sorted === "asc" ? "desc" : "asc");
                const name = String(header.column.columnDef.header).toLowerCase();
                return (
                  <th key={header.id} scope="col" aria-sort={sorted ? (sorted === "asc" ? "ascending" : "descending") : undefined}>
                    {to !== null ? (
                      <Link
                        to={to}
                        preventScrollReset={preventScrollReset}
                        className="inline-flex items-center gap-1 text-ink no-underline hover:underline"
                        aria-label={`Sort by ${name}${sorted ? `, now ${sorted === "asc" ? "ascending" : "descending"}` : ""}`}
                      >
                        <table.FlexRender header={header} />
                        <span aria-hidden="true" className="text-xs text-copper">{sorted === "asc" ? "▲" : sorted === "desc" ? "▼" : "↕"}</span>
                      </Link>
                    ) : (
                      <table.FlexRender header={header} />
                    )}
                  </th>
                );
              })}
            </tr>
          ))}
        </thead>
        {body ?? (
          <tbody>
            {table.getRowModel().rows.map((row) => (
              <tr key={row.id} className={rowClassName || undefined}>
                {row.getAllCells().map((cell) => (
                  // flexRender rather than <table.FlexRender>: one component fewer per cell on a page of 200 rows.
                  <td key={cell.id}>{flexRender(cell.column.columnDef.cell, cell.getContext())}</td>
                ))}
              </tr>
            ))}
          </tbody>
        )}
      </table>
    </div>
  );
}

import { createColumnHelper, flexRender, rowSortingFeature, tableFeatures, useTable, type SortingState } from "@tanstack/react-table";
import { Link } from "react-router";
import type { RegistryRow } from "~/.server/registry/queries";
import { normalisedDecimalKey } from "~/domain/exact-decimal";
import { REGISTRY_SORTS, registryViewSearch, type RegistrySort, type RegistryView } from "~/domain/registry-schemas";
import { formatDay, methodLabel, temperatureLabel, UncertaintyText, valleyLabel, ValueWithUnit } from "./format";
import { SourceLink } from "./source-link";

const features = tableFeatures({ rowSortingFeature });
const column = createColumnHelper<typeof features, RegistryRow>();

// Sorting and paging happen in SQL; the table gets one sorted page and only renders it (manualSorting).
// Cells link with plain anchors: rendering some 200 router links was most of this table's render time.
const columns = column.columns([
  column.display({
    id: "material",
    header: "Material",
    cell: ({ row: { original: r } }) => (
      <a href={`/materials/${encodeURIComponent(r.materialKey)}`} className="font-medium">
        {r.materialKey}
      </a>
    ),
  }),
  column.display({
    id: "quantity",
    header: "Quantity",
    cell: ({ row: { original: r } }) => (
      <span>
        <span className="font-mono">{r.quantitySymbol}</span> <span className="text-muted">{r.quantityName}</span>
        {r.composition !== null ? <span className="text-muted"> · x = {normalisedDecimalKey(r.composition)}</span> : null}
      </span>
    ),
  }),
  column.display({
    id: "value",
    header: "Value",
    cell: ({ row: { original: r } }) =>
      r.kind === "retirement" ? (
        <a href={`/records/${r.recordId}`} className="text-fail">retired</a>
      ) : (
        <a href={`/records/${r.recordId}`} className="no-underline">
          <ValueWithUnit value={r.value} unit={r.unit} className="text-ink" />
        </a>
      ),
  }),
  column.display({ id: "temperature", header: "Temperature", cell: ({ row: { original: r } }) => <span className="whitespace-nowrap">{temperatureLabel(r.quantityKey, r.temperatureK)}</span> }),
  column.display({ id: "valley", header: "Valley", enableSorting: false, cell: ({ row: { original: r } }) => valleyLabel(r.valley) }),
  column.display({ id: "uncertainty", header: "Uncertainty", enableSorting: false, cell: ({ row: { original: r } }) => (r.kind === "retirement" ? "—" : <UncertaintyText uncertainty={r.uncertainty} unit={r.unit} />) }),
  column.display({
    id: "source",
    header: "Source",
    enableSorting: false,
    cell: ({ row: { original: r } }) => (
      <span>
        <SourceLink source={r.source} />
        {r.method ? <span className="block text-xs text-muted">{methodLabel(r.method)}</span> : null}
      </span>
    ),
  }),
  column.display({
    id: "changed",
    header: "Last change",
    cell: ({ row: { original: r } }) => (
      <a href={`/records/${r.recordId}`} className="figure whitespace-nowrap">
        {formatDay(r.changedAt)} <span className="text-xs text-muted">rev {r.seq}</span>
      </a>
    ),
  }),
]);

const SORTABLE = new Set<string>(REGISTRY_SORTS);

export function RegistryTable({ rows, view }: { rows: RegistryRow[]; view: RegistryView }) {
  const sorting: SortingState = [{ id: view.sort, desc: view.dir === "desc" }];
  const table = useTable({ features, columns, data: rows, state: { sorting }, manualSorting: true, getRowId: (r) => String(r.recordId) });
  return (
    <div className="card overflow-x-auto">
      <table className="w-full border-collapse text-sm [&_td]:px-3 [&_td]:py-2 [&_td]:align-top">
        <caption className="sr-only">Current values of the records that match the filters, sorted by {view.sort} ({view.dir === "desc" ? "descending" : "ascending"})</caption>
        <thead>
          {table.getHeaderGroups().map((group) => (
            <tr key={group.id} className="border-b border-rule bg-paper text-left">
              {group.headers.map((header) => {
                const id = header.column.id;
                const sorted = header.column.getIsSorted();
                const canSort = SORTABLE.has(id);
                const nextDir = sorted === "asc" ? "desc" : "asc";
                return (
                  <th key={header.id} scope="col" className="px-3 py-2 font-semibold" aria-sort={sorted ? (sorted === "asc" ? "ascending" : "descending") : undefined}>
                    {canSort ? (
                      <Link
                        to={{ search: registryViewSearch(view, { sort: id as RegistrySort, dir: sorted ? nextDir : "asc", page: 1 }) }}
                        className="inline-flex items-center gap-1 text-ink no-underline hover:underline"
                        aria-label={`Sort by ${String(header.column.columnDef.header).toLowerCase()}${sorted ? `, now ${sorted === "asc" ? "ascending" : "descending"}` : ""}`}
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
        <tbody>
          {table.getRowModel().rows.map((row) => (
            <tr key={row.id} className="border-b border-rule last:border-b-0">
              {row.getAllCells().map((cell) => (
                <td key={cell.id}>
                  {flexRender(cell.column.columnDef.cell, cell.getContext())}
                </td>
              ))}
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

import { createColumnHelper, rowSortingFeature, tableFeatures, useTable, type SortingState } from "@tanstack/react-table";
import type { RegistryRow } from "~/.server/registry/listing";
import { SortableTable } from "~/components/sortable-table";
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
    <SortableTable
      table={table}
      sorting={sorting}
      caption={`Current values of the records that match the filters, sorted by ${view.sort} (${view.dir === "desc" ? "descending" : "ascending"})`}
      sortTo={(id, dir) => (SORTABLE.has(id) ? { search: registryViewSearch(view, { sort: id as RegistrySort, dir, page: 1 }) } : null)}
    />
  );
}

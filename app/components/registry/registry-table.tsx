import type { ReactNode } from "react";
import { createColumnHelper, rowSortingFeature, tableFeatures, useTable, type SortingState } from "@tanstack/react-table";
import type { RegistryTablePage, RegistryTableRow, RegistryTableSource } from "~/.server/registry/listing";
import { SortableTable } from "~/components/sortable-table";
import { quantityByKey } from "~/domain/quantities";
import { REGISTRY_SORTS, registryViewSearch, type RegistrySort, type RegistryView } from "~/domain/registry-schemas";
import { displayUnit } from "~/domain/units";

const features = tableFeatures({ rowSortingFeature });
const column = createColumnHelper<typeof features, RegistryTableRow>();

// Sorting and paging happen in SQL; the table gets one sorted page and only renders it. The headings come from the
// table's columns; each row is written out here as plain elements, without a component or the table's row model per
// cell, and styled by column in app.css (.registry-rows), so its markup carries no class attribute. A CPU profile
// of the page under load put the per-cell row model and components at a fifth of its work, and the class attributes
// at half of the table's bytes. Cells link with plain anchors: some 200 router links were most of the render time.
const COLUMNS = [
  { id: "material", header: "Material" },
  { id: "quantity", header: "Quantity" },
  { id: "value", header: "Value" },
  { id: "temperature", header: "Temperature" },
  { id: "valley", header: "Valley" },
  { id: "uncertainty", header: "Uncertainty" },
  { id: "source", header: "Source" },
  { id: "changed", header: "Last change" },
] as const;
type ColumnId = (typeof COLUMNS)[number]["id"];

const SORTABLE = new Set<string>(REGISTRY_SORTS);
const columns = column.columns(COLUMNS.map((c) => column.display({ id: c.id, header: c.header, enableSorting: SORTABLE.has(c.id) })));

/** The quantity's symbol, name and unit from the catalogue; a key the catalogue does not know shows as itself. */
function quantityOf(key: string): { symbol: string; name: string; unit: string } {
  const q = quantityByKey(key);
  return q ? { symbol: q.symbol, name: q.name, unit: q.canonicalUnit } : { symbol: key, name: "", unit: "" };
}

function unitText(unit: string): ReactNode {
  const shown = displayUnit(unit);
  return shown ? <small>{shown}</small> : <small className="text-xs">(dimensionless)</small>;
}

/** A row's fields by name (the page sends them as a tuple, see RegistryTableRow), with its source looked up. */
function named(r: RegistryTableRow, sources: RegistryTableSource[]) {
  const [recordId, materialKey, quantityKey, composition, retirement, value, uncertainty, temperature, valley, source, method, changed, seq] = r;
  return { recordId, materialKey, quantity: quantityOf(quantityKey), composition, retirement, value, uncertainty, temperature, valley, source: source === null ? null : sources[source], method, changed, seq };
}
type Row = ReturnType<typeof named>;

// One function per column, in the order of COLUMNS; app.css styles each column's elements by its position.
const CELLS: Record<ColumnId, (r: Row) => ReactNode> = {
  material: (r) => <a href={`/materials/${encodeURIComponent(r.materialKey)}`}>{r.materialKey}</a>,
  quantity: (r) => (
    <>
      <span>{r.quantity.symbol}</span> <small>{r.composition === null ? r.quantity.name : `${r.quantity.name} · x = ${r.composition}`}</small>
    </>
  ),
  value: (r) =>
    r.retirement ? (
      <a href={`/records/${r.recordId}`} className="text-fail">retired</a>
    ) : (
      <a href={`/records/${r.recordId}`}>
        {r.value === null ? (
          <small>no value</small>
        ) : (
          <>
            <span>{r.value}</span> {unitText(r.quantity.unit)}
          </>
        )}
      </a>
    ),
  temperature: (r) => r.temperature,
  valley: (r) => r.valley,
  uncertainty: (r) => {
    if (r.retirement) return "—";
    if (r.uncertainty === null) return <small>not stated</small>;
    const shown = displayUnit(r.quantity.unit);
    return (
      <span>
        ± <span>{r.uncertainty}</span>
        {shown ? ` ${shown}` : ""}
      </span>
    );
  },
  source: (r) => (
    <>
      {r.source ? <a href={`/sources/${r.source[0]}`} title={r.source[2]}>{r.source[1]}</a> : <span className="text-muted">no source</span>}
      {r.method ? <small>{r.method}</small> : null}
    </>
  ),
  changed: (r) => (
    <a href={`/records/${r.recordId}`}>
      {`${r.changed} `}
      <small>{`rev ${r.seq}`}</small>
    </a>
  ),
};

export function RegistryTable({ page, view }: { page: Pick<RegistryTablePage, "rows" | "sources">; view: RegistryView }) {
  const sorting: SortingState = [{ id: view.sort, desc: view.dir === "desc" }];
  const table = useTable({ features, columns, data: page.rows, state: { sorting }, manualSorting: true });
  return (
    <SortableTable
      table={table}
      sorting={sorting}
      caption={`Current values of the records that match the filters, sorted by ${view.sort} (${view.dir === "desc" ? "descending" : "ascending"})`}
      sortTo={(id, dir) => (SORTABLE.has(id) ? { search: registryViewSearch(view, { sort: id as RegistrySort, dir, page: 1 }) } : null)}
      body={
        <tbody className="registry-rows">
          {page.rows.map((tuple) => {
            const r = named(tuple, page.sources);
            return (
              <tr key={r.recordId}>
                {COLUMNS.map((c) => (
                  <td key={c.id}>{CELLS[c.id](r)}</td>
                ))}
              </tr>
            );
          })}
        </tbody>
      }
    />
  );
}

import { Form, Link } from "react-router";
import { RECORD_QUANTITIES } from "~/domain/quantities";
import { METHOD_KEYS, METHOD_LABELS, PAGE_SIZES, type RegistryView } from "~/domain/registry-schemas";

/** Families and materials from the database; the quantities are the catalogue's, in its order. */
export type FilterOptions = {
  families: { key: string; name: string }[];
  materials: { key: string; name: string; familyKey: string }[] | null;
};

/** The registry's filters as a GET form: the view lands in the URL, so it can be shared and works without JavaScript. */
export function RegistryFilters({ view, options }: { view: RegistryView; options: FilterOptions }) {
  const materials = options.materials;
  return (
    <Form method="get" action="/registry" className="card grid gap-3 p-3 sm:grid-cols-2 lg:grid-cols-[repeat(6,minmax(0,1fr))_auto]" role="search" aria-label="Filter the registry">
      <label className="block">
        <span className="label">Family</span>
        <select name="family" defaultValue={view.family ?? ""} className="field mt-1">
          <option value="">All families</option>
          {options.families.map((f) => (
            <option key={f.key} value={f.key}>{f.name}</option>
          ))}
        </select>
      </label>
      <label className="block">
        <span className="label">Material</span>
        {materials ? (
          <select name="material" defaultValue={view.material ?? ""} className="field mt-1">
            <option value="">All materials</option>
            {materials.map((m) => (
              <option key={m.key} value={m.key} title={m.name}>{m.key}</option>
            ))}
            {view.material && !materials.some((m) => m.key === view.material) ? <option value={view.material}>{view.material}</option> : null}
          </select>
        ) : (
          <input name="material" defaultValue={view.material ?? ""} placeholder="key, e.g. GaAs" className="field mt-1" maxLength={64} />
        )}
      </label>
      <label className="block">
        <span className="label">Quantity</span>
        <select name="quantity" defaultValue={view.quantity ?? ""} className="field mt-1">
          <option value="">All quantities</option>
          {RECORD_QUANTITIES.map((q) => (
            <option key={q.key} value={q.key}>{`${q.symbol} — ${q.name}`}</option>
          ))}
        </select>
      </label>
      <label className="block">
        <span className="label">Method</span>
        <select name="method" defaultValue={view.method ?? ""} className="field mt-1">
          <option value="">Any method</option>
          {METHOD_KEYS.map((m) => (
            <option key={m} value={m}>{METHOD_LABELS[m]}</option>
          ))}
        </select>
      </label>
      <label className="block">
        <span className="label">Records</span>
        <select name="status" defaultValue={view.status} className="field mt-1">
          <option value="active">current values</option>
          <option value="retired">retired</option>
          <option value="all">all</option>
        </select>
      </label>
      <label className="block">
        <span className="label">Text</span>
        <input type="search" name="q" defaultValue={view.q ?? ""} placeholder="e.g. Vurgaftman" className="field mt-1" maxLength={100} />
      </label>
      <input type="hidden" name="sort" value={view.sort} />
      <input type="hidden" name="dir" value={view.dir} />
      <div className="flex items-end gap-2">
        <label className="block">
          <span className="label">Rows</span>
          <select name="size" defaultValue={String(view.size)} className="field mt-1">
            {PAGE_SIZES.map((s) => (
              <option key={s} value={s}>{s}</option>
            ))}
          </select>
        </label>
        <button type="submit" className="btn-primary">Apply</button>
        <Link to="/registry" className="btn no-underline">Clear</Link>
      </div>
    </Form>
  );
}

import { Form } from "react-router";
import type { DerivedForm } from "~/.server/derived";
import { derivedNumbersOf, evaluatedValueOf, type DerivedValuesData } from "~/domain/derived";
import { readable } from "~/components/checks/format";
import { FieldError, invalidProps } from "~/components/field-error";
import { AlloyPlot } from "./alloy-plot";
import { DerivedTable } from "./derived-table";
import { TemperaturePlot } from "./temperature-plot";

/**
 * On a material page: derived gaps at Γ, X and L and the lattice constant at any temperature (and, for an alloy,
 * any composition), each with its formula and the revisions it came from, and the Eg(T) and Eg(x) plots. A GET
 * form, so every view has its address and works without JavaScript.
 */
export function DerivedValues({ derived, form }: { derived: DerivedValuesData; form: DerivedForm }) {
  const alloy = derived.material.kind === "alloy";
  const e = form.errors;
  const xText = derived.composition === null ? "" : String(derived.composition);
  const items = derivedNumbersOf(derived).map(evaluatedValueOf);
  return (
    <section id="derived" className="card space-y-4 p-5" aria-labelledby="derived-title">
      <div className="flex flex-wrap items-baseline gap-x-3">
        <h2 id="derived-title" className="text-lg font-semibold">Derived values</h2>
        <p className="text-sm text-muted">
          Computed now from the current revisions, not stored{alloy ? `; x is the fraction of ${derived.alloyPlot?.compositionLabel.match(/fraction of (\S+)\)/)?.[1] ?? "end member A"}` : ""}. Each uncertainty is
          propagated by the GUM from the uncertainties the revisions state; “± not stated” where they state none.
        </p>
      </div>
      <Form method="get" preventScrollReset className="flex flex-wrap items-start gap-3" aria-label="Conditions of the derived values">
        <div>
          <label htmlFor="derived-temperature" className="label">Temperature (K)</label>
          <input id="derived-temperature" name="temperature" inputMode="decimal" defaultValue={form.values.temperature || String(derived.temperatureK)} className="field mt-1 w-28 font-mono" {...invalidProps("derived-temperature-error", e.temperature)} />
          <FieldError id="derived-temperature-error" message={e.temperature} />
        </div>
        {alloy ? (
          <div>
            <label htmlFor="derived-x" className="label">Composition x</label>
            <input id="derived-x" name="x" inputMode="decimal" defaultValue={form.values.x || xText} className="field mt-1 w-28 font-mono" {...invalidProps("derived-x-error", e.x)} />
            <FieldError id="derived-x-error" message={e.x} />
          </div>
        ) : null}
        {derived.substrates.length ? (
          <div>
            <label htmlFor="derived-substrate" className="label">Substrate</label>
            <select id="derived-substrate" name="substrate" defaultValue={derived.substrateKey ?? ""} className="field mt-1 w-64" {...invalidProps("derived-substrate-error", e.substrate)}>
              {alloy ? null : <option value="">none</option>}
              {derived.substrates.map((s) => (
                <option key={s.key} value={s.key}>{s.key} — {s.name}</option>
              ))}
            </select>
            <FieldError id="derived-substrate-error" message={e.substrate} />
          </div>
        ) : null}
        <div className="pt-5">
          <button type="submit" className="btn-primary">Derive</button>
        </div>
      </Form>

      {items.length ? (
        <DerivedTable items={items} label="Derived values" />
      ) : (
        <p className="text-sm text-muted">Nothing can be derived for {derived.material.key} from the values in the ledger yet.</p>
      )}
      {derived.missing.length ? (
        <ul className="list-disc pl-5 text-sm text-muted" aria-label="Not derived">
          {derived.missing.map((m) => (
            <li key={m}>{m}</li>
          ))}
        </ul>
      ) : null}

      {derived.alloyPlot && derived.alloyPlot.crossovers.length ? (
        <p className="text-sm">
          {derived.alloyPlot.crossovers.map((c) => (
            <span key={c.valley} className="mr-4 inline-block">
              Γ–{c.valley} crossover at {derived.temperatureK} K:{" "}
              <b className="figure font-mono">{c.x === null ? "none in 0 ≤ x ≤ 1" : `x = ${c.x.toFixed(3)}`}</b>
              {c.valueEv !== null ? <span className="text-muted"> ({readable(c.valueEv, 4)} eV)</span> : null}
            </span>
          ))}
          {derived.alloyPlot.latticeMatch ? (
            <span className="inline-block">
              Lattice match to {derived.alloyPlot.latticeMatch.substrateKey}:{" "}
              <b className="figure font-mono">{derived.alloyPlot.latticeMatch.x === null ? "none" : `x = ${derived.alloyPlot.latticeMatch.x.toFixed(3)}`}</b>
            </span>
          ) : null}
        </p>
      ) : null}

      {derived.temperaturePlot || derived.alloyPlot ? (
        <div className="grid gap-6 xl:grid-cols-2">
          {derived.temperaturePlot ? (
            <TemperaturePlot plot={derived.temperaturePlot} title={alloy ? `Band gap against temperature at x = ${xText}` : `Band gap of ${derived.material.key} against temperature`} />
          ) : null}
          {derived.alloyPlot ? <AlloyPlot plot={derived.alloyPlot} temperatureK={derived.temperatureK} title={`Band gap of ${derived.material.key} against composition`} /> : null}
        </div>
      ) : null}
    </section>
  );
}

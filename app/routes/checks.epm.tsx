import { useEffect, useState } from "react";
import { data, Form } from "react-router";
import type { Route } from "./+types/checks.epm";
import { blankFormFactors, epmQueryOf, runEpmPage, type EpmFormValues, type EpmPageData } from "~/.server/checks";
import { guardSolveOrRespond } from "~/.server/checks/solve-guard";
import { requireUser } from "~/.server/permissions";
import { BandStructureChart } from "~/components/charts";
import { CheckExamples, LengthField, useRecheckedForm, VerdictBadge } from "~/components/checks";
import { FieldError, FormError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "Crystal check · Bandledger" }];

const CB66 = "Cohen & Bergstresser, Phys. Rev. 141, 789 (1966)";

const EXAMPLES: { label: string; hint: string; values: EpmFormValues }[] = [
  {
    label: "Silicon",
    hint: `Form factors and a of ${CB66}; stated Eg(Γ) = 3.4 eV: passes. The conduction minimum lies at 0.85 of Γ–X.`,
    values: { structure: "diamond", lattice: "5.43", unit: "angstrom", ffunit: "ry", formFactors: { ...blankFormFactors(), s3: "-0.21", s8: "0.04", s11: "0.08" }, gamma: "3.4", x: "", l: "", tolerance: "0.15" },
  },
  {
    label: "Silicon's 0 K gap entered as the X gap",
    hint: "Stated Eg(X) = 1.17 eV (the indirect gap, from memory): warns, and the note points at the Δ minimum.",
    values: { structure: "diamond", lattice: "5.43", unit: "angstrom", ffunit: "ry", formFactors: { ...blankFormFactors(), s3: "-0.21", s8: "0.04", s11: "0.08" }, gamma: "", x: "1.17", l: "", tolerance: "0.15" },
  },
  {
    label: "GaAs against its 0 K gaps",
    hint: `Form factors of ${CB66}; stated 1.519, 1.981, 1.815 eV (Vurgaftman et al. 2001): Γ passes, X and L warn.`,
    values: {
      structure: "zincblende", lattice: "5.64", unit: "angstrom", ffunit: "ry",
      formFactors: { s3: "-0.23", s8: "0.01", s11: "0.06", a3: "0.07", a4: "0.05", a11: "0.01" },
      gamma: "1.519", x: "1.981", l: "1.815", tolerance: "0.15",
    },
  },
  {
    label: "A sign slip in V_S(3)",
    hint: "Silicon with V_S(3) = +0.21 Ry: the stated 3.4 eV fails.",
    values: { structure: "diamond", lattice: "5.43", unit: "angstrom", ffunit: "ry", formFactors: { ...blankFormFactors(), s3: "0.21", s8: "0.04", s11: "0.08" }, gamma: "3.4", x: "", l: "", tolerance: "0.15" },
  },
];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const params = new URL(request.url).searchParams;
  const page = await guardSolveOrRespond(user.id, () => runEpmPage(params), "page");
  const body = { ...page, examples: EXAMPLES.map((e) => ({ label: e.label, hint: e.hint, query: epmQueryOf(e.values).toString() })) };
  // A query with wrong inputs is a bad request: the page shows the messages at their fields with a 400.
  const live = params.get("live") === "1";
  return data(body, { status: Object.keys(page.errors).length && !live ? 400 : 200 });
}

const DEBOUNCE_MS = 400;

function readable(value: string | number, digits = 4): string {
  const n = Number(value);
  return Number.isFinite(n) ? n.toFixed(digits).replace("-", "−") : String(value);
}

function signedEv(value: string): string {
  const n = Number(value);
  return `${n > 0 ? "+" : ""}${readable(n, 3)} eV`;
}

const POINTS = [
  { key: "gamma", label: "Γ", formula: "E5(Γ) − E4(Γ)" },
  { key: "x", label: "X", formula: "E5(X) − E4(Γ)" },
  { key: "l", label: "L", formula: "E5(L) − E4(Γ)" },
] as const;

function Caution() {
  return (
    <p className="rounded-[var(--radius-card)] border border-warn px-3 py-2 text-sm" data-epm-caution>
      A local model with three symmetric (and three antisymmetric) form factors reproduces the main gaps to about 0.1–0.3 eV: it is fitted to a
      few optical transitions. Use it to check that stated form factors and gaps belong together, not in place of measured values; confirm every
      value against your own measurements and qualification rules before a device decision.
    </p>
  );
}

function Results({ data }: { data: EpmPageData }) {
  const r = data.result;
  if (!r) {
    return (
      <div className="card p-5 text-sm text-muted" data-epm-result="none">
        {data.errors.form ?? "Correct the marked fields to see the check."}
      </div>
    );
  }
  const anyStated = POINTS.some((p) => r[p.key].statedEv !== null);
  const bands = r.bands;
  const at = (label: string) => bands?.labels.find((l) => l.label === label)?.distance;
  const marks: { label: string; distance: number; energyEv: number; below?: boolean }[] = bands
    ? POINTS.flatMap((p) => {
        const distance = at(p.label);
        return distance === undefined ? [] : [{ label: p.label, distance, energyEv: Number(r[p.key].gapEv) }];
      })
    : [];
  // The conduction minimum inside Γ–X (silicon's Δ valley) is marked where it lies.
  const gammaAt = at("Γ");
  const xAt = at("X");
  if (bands && r.fundamental.valley === "Δ" && gammaAt !== undefined && xAt !== undefined) {
    marks.push({ label: "Δ", distance: gammaAt + Number(r.x.gammaXMinimum.fraction) * (xAt - gammaAt), energyEv: Number(r.x.gammaXMinimum.gapEv), below: true });
  }
  return (
    <div className="card space-y-4 p-5" data-epm-result={r.verdict}>
      <div className="flex flex-wrap items-center gap-3">
        <h2 className="text-lg font-semibold">
          {r.structure === "diamond" ? "Diamond" : "Zinc blende"}, a = {Number(r.latticeAngstrom)} Å
        </h2>
        <VerdictBadge status={r.verdict} large />
        {anyStated ? (
          <span className="text-sm text-muted">tolerance {readable(r.toleranceEv, 3)} eV (pass ≤ tol, warn ≤ 3·tol)</span>
        ) : (
          <span className="text-sm text-muted">Enter a stated gap to get a verdict.</span>
        )}
      </div>
      <table className="w-full text-left text-sm" aria-label="Gaps at Γ, X and L">
        <thead className="text-xs text-muted">
          <tr>
            <th className="py-1 pr-2 font-medium">gap (eV)</th>
            <th className="px-2 text-right font-medium">computed</th>
            <th className="px-2 text-right font-medium">stated</th>
            <th className="px-2 text-right font-medium">stated − computed</th>
            <th className="pl-2 font-medium">verdict</th>
          </tr>
        </thead>
        <tbody>
          {POINTS.map((p) => {
            const g = r[p.key];
            return (
              <tr key={p.key} className="border-t border-rule" data-epm-gap={p.key}>
                <td className="py-1.5 pr-2">
                  Eg({p.label}) <span className="text-xs text-muted">= {p.formula}</span>
                </td>
                <td className="figure px-2 text-right font-mono">{readable(g.gapEv)}</td>
                <td className="figure px-2 text-right font-mono">{g.statedEv === null ? "—" : readable(g.statedEv)}</td>
                <td className="figure px-2 text-right font-mono">{g.residualEv === null ? "—" : signedEv(g.residualEv)}</td>
                <td className="pl-2">{g.statedEv === null ? <span className="text-xs text-muted">—</span> : <VerdictBadge status={g.verdict} />}</td>
              </tr>
            );
          })}
        </tbody>
      </table>
      <dl className="grid gap-x-6 gap-y-1 text-sm sm:grid-cols-2">
        <div>
          <dt className="inline text-muted">Lowest conduction energy along Γ–X: </dt>
          <dd className="figure inline font-mono">
            {readable(r.x.gammaXMinimum.gapEv)} eV at {Number(r.x.gammaXMinimum.fraction).toFixed(2)} of Γ–X
          </dd>
        </div>
        <div>
          <dt className="inline text-muted">Fundamental gap: </dt>
          <dd className="figure inline font-mono" data-epm-fundamental={r.fundamental.valley}>
            {readable(r.fundamental.gapEv)} eV ({r.fundamental.valley})
          </dd>
        </div>
        <div>
          <dt className="inline text-muted">Basis: </dt>
          <dd className="inline" data-epm-plane-waves={r.planeWaves}>
            {r.planeWaves} plane waves, |G|² ≤ {r.maxSquare} (2π/a)²{r.converged ? `, gaps moved < ${Number(r.convergenceEv) * 1000} meV at the last shell` : " — not converged"}
          </dd>
        </div>
        <div>
          <dt className="inline text-muted">Form factors used (eV): </dt>
          <dd className="figure inline font-mono text-xs">
            {Object.entries(r.formFactorsEv)
              .map(([k, v]) => `${k} ${readable(v, 4)}`)
              .join(" · ")}
          </dd>
        </div>
      </dl>
      {r.notes.length ? (
        <ul className="list-disc space-y-1 pl-5 text-sm" data-epm-notes>
          {r.notes.map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      ) : null}
      <Caution />
      {bands ? (
        <figure className="space-y-2 [--chart-highlight:var(--color-teal)]">
          <BandStructureChart
            labels={bands.labels}
            distance={bands.distance}
            energiesEv={bands.energiesEv}
            gap={{ gapEv: Number(r.fundamental.gapEv), label: `Eg ${readable(r.fundamental.gapEv, 3)} eV (${r.fundamental.valley})` }}
            marks={marks}
            title={`Bands along L–Γ–X–U|K–Γ, ${r.structure === "diamond" ? "diamond" : "zinc blende"}, a = ${Number(r.latticeAngstrom)} Å`}
          />
          <figcaption className="text-xs text-muted">
            Eight lowest bands on {bands.planeWaves} plane waves (the smallest basis of the run whose gaps at Γ, X and L lie within{" "}
            {readable(bands.deviationEv * 1000, 1)} meV of the converged ones). H_GG′ = (ħ²/2m₀)|k + G|² δ_GG′ + V(G − G′), V(G) = V_S cos(G·τ) + i V_A
            sin(G·τ), τ = (a/8)(1,1,1) [{CB66}]. Shaded: the fundamental gap above the valence maximum at 0; ringed: the conduction energies compared
            at Γ, X and L. Constants {r.codataEdition}.
          </figcaption>
        </figure>
      ) : null}
    </div>
  );
}

const FORM_FACTOR_INPUTS = [
  { field: "s3", label: "V_S(3)" },
  { field: "s8", label: "V_S(8)" },
  { field: "s11", label: "V_S(11)" },
  { field: "a3", label: "V_A(3)" },
  { field: "a4", label: "V_A(4)" },
  { field: "a11", label: "V_A(11)" },
] as const;

export default function CrystalCheckPage({ loaderData }: Route.ComponentProps) {
  const { data, formRef, recheck, busy } = useRecheckedForm<EpmPageData>("/checks/epm", loaderData, { debounceMs: DEBOUNCE_MS, keepEmpty: false });
  const { values } = loaderData;
  const [structure, setStructure] = useState(values.structure);
  useEffect(() => setStructure(values.structure), [values.structure]);


  // Field messages follow the latest check, so a fix clears its message without a reload.
  const shown = data.errors;

  return (
    <div className="space-y-6">
      <header className="max-w-3xl">
        <p className="label">Physics checks</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">Crystal check: form factors against the gaps at Γ, X and L</h1>
        <p className="mt-2 text-sm text-muted">
          The central equation in three dimensions for a diamond or zinc-blende crystal: plane waves on the fcc reciprocal lattice and a local
          potential given by its form factors V_S and V_A at |G|² = 3, 4, 8, 11 (2π/a)² (the empirical pseudopotential method of {CB66}). The basis
          grows shell by shell until the gaps move by less than 1 meV; the gaps are those the registry keeps, from the valence maximum E4(Γ) with four
          filled bands. The same numbers come from
          <code className="mx-1 font-mono text-xs">npm run --silent bandledger -- epm</code>and from POST /api/v1/checks/epm.
        </p>
      </header>

      <div className="grid gap-6 lg:grid-cols-[22rem_minmax(0,1fr)]">
        <div className="space-y-4">
          <Form key={JSON.stringify(values)} method="get" ref={formRef} className="card space-y-4 p-5" onChange={recheck} noValidate aria-label="Inputs of the check">
            <fieldset>
              <legend className="label normal-case tracking-normal">Structure</legend>
              <div className="mt-1 flex gap-4 text-sm">
                {(["diamond", "zincblende"] as const).map((s) => (
                  <label key={s} className="flex items-center gap-1.5">
                    <input type="radio" name="structure" value={s} defaultChecked={values.structure === s} onChange={() => setStructure(s)} {...invalidProps("epm-structure-error", shown.structure)} />
                    {s === "diamond" ? "diamond" : "zinc blende"}
                  </label>
                ))}
              </div>
              <FieldError id="epm-structure-error" message={shown.structure} />
            </fieldset>

            <LengthField id="epm-lattice" name="lattice" label="Lattice constant a" value={values.lattice} unit={values.unit} unitLabel="Unit of the lattice constant" error={shown.lattice} />

            <fieldset>
              <legend className="label normal-case tracking-normal">Form factors</legend>
              <div className="mt-1 flex items-center gap-2 text-sm">
                <label htmlFor="epm-ffunit" className="text-muted">unit</label>
                <select id="epm-ffunit" name="ffunit" defaultValue={values.ffunit} className="field w-24" {...invalidProps("epm-ffunit-error", shown.ffunit)}>
                  <option value="ry">Ry</option>
                  <option value="ev">eV</option>
                </select>
              </div>
              <FieldError id="epm-ffunit-error" message={shown.ffunit} />
              <div className="mt-2 grid grid-cols-3 gap-2">
                {FORM_FACTOR_INPUTS.map(({ field, label }) => {
                  const antisymmetric = field.startsWith("a");
                  return (
                    <div key={field}>
                      <label htmlFor={`epm-${field}`} className="text-xs text-muted">{label}</label>
                      <input
                        id={`epm-${field}`}
                        name={field}
                        inputMode="decimal"
                        defaultValue={values.formFactors[field]}
                        placeholder={antisymmetric ? (structure === "diamond" ? "—" : "0") : ""}
                        className="field font-mono"
                        {...invalidProps(`epm-${field}-error`, shown[field])}
                      />
                    </div>
                  );
                })}
              </div>
              {FORM_FACTOR_INPUTS.map(({ field }) => (
                <FieldError key={field} id={`epm-${field}-error`} message={shown[field] ? `${FORM_FACTOR_INPUTS.find((f) => f.field === field)!.label}: ${shown[field]}` : null} />
              ))}
              <p className="mt-1 text-xs text-muted">
                V_A (antisymmetric) only for zinc blende, two kinds of atom{structure === "diamond" ? "; diamond leaves them empty" : "; an empty one is zero"}.
              </p>
            </fieldset>

            <fieldset>
              <legend className="label normal-case tracking-normal">Stated gaps (eV, optional)</legend>
              <div className="mt-1 grid grid-cols-3 gap-2">
                {POINTS.map((p) => (
                  <div key={p.key}>
                    <label htmlFor={`epm-${p.key}`} className="text-xs text-muted">Eg({p.label})</label>
                    <input id={`epm-${p.key}`} name={p.key} inputMode="decimal" defaultValue={values[p.key]} className="field font-mono" {...invalidProps(`epm-${p.key}-error`, shown[p.key])} />
                  </div>
                ))}
              </div>
              {POINTS.map((p) => (
                <FieldError key={p.key} id={`epm-${p.key}-error`} message={shown[p.key] ? `Eg(${p.label}): ${shown[p.key]}` : null} />
              ))}
            </fieldset>

            <div>
              <label htmlFor="epm-tolerance" className="label normal-case tracking-normal">Tolerance (eV)</label>
              <input id="epm-tolerance" name="tolerance" inputMode="decimal" defaultValue={values.tolerance} className="field mt-1 font-mono" {...invalidProps("epm-tolerance-error", shown.tolerance)} />
              <FieldError id="epm-tolerance-error" message={shown.tolerance} />
              <p className="mt-1 text-xs text-muted">Default 0.15 eV: such models are fitted to a few transitions.</p>
            </div>
            <FormError message={shown.form} />
            <button type="submit" className="btn-primary">Check</button>
          </Form>

          <CheckExamples path="/checks/epm" examples={loaderData.examples} />
        </div>

        <div aria-live="polite" aria-busy={busy || undefined}>
          <Results data={data} />
        </div>
      </div>
    </div>
  );
}

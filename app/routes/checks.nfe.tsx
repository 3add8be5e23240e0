import { data, Form } from "react-router";
import type { Route } from "./+types/checks.nfe";
import { NFE_MAX_ROWS, nfeQueryOf, runNfePage, type NfeFormValues, type NfePageData } from "~/.server/checks";
import { guardSolveOrRespond } from "~/.server/checks/solve-guard";
import { requireUser } from "~/.server/permissions";
import { CheckExamples, LengthField, NfePlot, useRecheckedForm, VerdictBadge } from "~/components/checks";
import { FieldError, invalidProps } from "~/components/field-error";

export const meta: Route.MetaFunction = () => [{ title: "Nearly-free-electron check · Bandledger" }];

const EXAMPLES: { label: string; hint: string; values: NfeFormValues }[] = [
  {
    label: "Two-band example",
    hint: "U_1 = 0.1 eV, stated gap 2|U_1| = 0.2 eV: passes.",
    values: { period: "5.65325", unit: "angstrom", coefficients: [{ n: "1", u: "0.1" }], gap: "1", mass: "1", stated: "0.2", tolerance: "0.01" },
  },
  {
    label: "The U0·cos(Gx) slip",
    hint: "Stated gap |U_1| = 0.1 eV, as if U0 had been entered as U_1: fails.",
    values: { period: "5.65325", unit: "angstrom", coefficients: [{ n: "1", u: "0.1" }], gap: "1", mass: "1", stated: "0.1", tolerance: "0.01" },
  },
  {
    label: "A strong potential",
    hint: "U_1 = 5·ε(π/a) (Mathieu q = 5): first order is far off the central equation.",
    values: { period: "5.65325", unit: "angstrom", coefficients: [{ n: "1", u: "5.882965535" }], gap: "1", mass: "1", stated: "", tolerance: "0.01" },
  },
  {
    label: "The demo GaAs model potential",
    hint: "U_1 = 0.71125, U_2 = 0.025 eV, stated 1.4225 eV: right to first order only.",
    values: { period: "5.65325", unit: "angstrom", coefficients: [{ n: "1", u: "0.71125" }, { n: "2", u: "0.0250" }], gap: "1", mass: "1", stated: "1.4225", tolerance: "0.01" },
  },
];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const params = new URL(request.url).searchParams;
  const page = await guardSolveOrRespond(user.id, () => runNfePage(params), "page");
  const body = { ...page, maxRows: NFE_MAX_ROWS, examples: EXAMPLES.map((e) => ({ label: e.label, hint: e.hint, query: nfeQueryOf(e.values).toString() })) };
  // A query with wrong inputs is a bad request: the page shows the messages at their fields with a 400.
  const live = params.get("live") === "1";
  return data(body, { status: Object.keys(page.errors).length && !live ? 400 : 200 });
}

const DEBOUNCE_MS = 300;

function readable(value: string | number, digits = 7): string {
  const n = Number(value);
  return Number.isFinite(n) ? String(Number(n.toPrecision(digits))).replace("-", "−") : String(value);
}

function meV(value: string): string {
  const n = Number(value) * 1000;
  return `${n > 0 ? "+" : ""}${readable(n, 4)} meV`;
}

function Results({ data }: { data: NfePageData }) {
  const r = data.result;
  if (!r) {
    return (
      <div className="card p-5 text-sm text-muted" data-nfe-result="none">
        {data.errors.form ?? "Correct the marked fields to see the check."}
      </div>
    );
  }
  const rows = [
    { label: "first order, 2|U_n|", gap: r.firstOrder.gapEv, lower: r.firstOrder.lowerEv, upper: r.firstOrder.upperEv },
    { label: `central equation (${r.centralEquation.planeWaves} plane waves${r.centralEquation.converged ? "" : ", not converged"})`, gap: r.centralEquation.gapEv, lower: r.centralEquation.lowerEv, upper: r.centralEquation.upperEv },
  ];
  return (
    <div className="card space-y-4 p-5" data-nfe-result={r.verdict}>
      <div className="flex flex-wrap items-center gap-3">
        <h2 className="text-lg font-semibold">Gap {r.gapIndex} at k = {r.kPiOverA === 1 ? "π/a" : "0"}</h2>
        <VerdictBadge status={r.verdict} large />
        {r.residualEv !== null ? (
          <span className="text-sm">
            stated − central equation <b className="figure font-mono">{meV(r.residualEv)}</b>
            <span className="text-muted"> (tolerance {readable(Number(r.toleranceEv) * 1000, 4)} meV)</span>
          </span>
        ) : (
          <span className="text-sm text-muted">Enter a stated gap to get a verdict.</span>
        )}
      </div>
      <table className="w-full text-left text-sm" aria-label="First order against the central equation">
        <thead className="text-xs text-muted">
          <tr>
            <th className="py-1 pr-2 font-medium">energies in eV</th>
            <th className="px-2 text-right font-medium">gap</th>
            <th className="px-2 text-right font-medium">lower edge</th>
            <th className="pl-2 text-right font-medium">upper edge</th>
          </tr>
        </thead>
        <tbody className="figure font-mono">
          {r.statedGapEv !== null ? (
            <tr className="border-t border-rule">
              <td className="py-1.5 pr-2 font-sans">stated</td>
              <td className="px-2 text-right">{readable(r.statedGapEv)}</td>
              <td className="px-2 text-right text-muted">—</td>
              <td className="pl-2 text-right text-muted">—</td>
            </tr>
          ) : null}
          {rows.map((row) => (
            <tr key={row.label} className="border-t border-rule">
              <td className="py-1.5 pr-2 font-sans">{row.label}</td>
              <td className="px-2 text-right">{readable(row.gap)}</td>
              <td className="px-2 text-right">{readable(row.lower)}</td>
              <td className="pl-2 text-right">{readable(row.upper)}</td>
            </tr>
          ))}
        </tbody>
      </table>
      {r.notes.length ? (
        <ul className="list-disc space-y-1 pl-5 text-sm">
          {r.notes.map((n) => (
            <li key={n}>{n}</li>
          ))}
        </ul>
      ) : null}
      <NfePlot
        width={820}
        height={420}
        kPoints={201}
        input={{ periodAngstrom: r.periodAngstrom, coefficients: r.coefficients, massM0: r.massM0, gapIndex: r.gapIndex, gap: { lowerEv: Number(r.centralEquation.lowerEv), upperEv: Number(r.centralEquation.upperEv), kPiOverA: r.kPiOverA } }}
      />
      <p className="text-xs text-muted">
        Free-electron energy at the zone boundary ε(π/a) = {readable(r.zoneBoundaryEv)} eV. Bands from the plane-wave Hamiltonian H_mm′ = (ħ²/2m)(k − mG)² δ_mm′ + U_(m′−m), G = 2π/a [Kittel ch. 7]; dashed: the free-electron parabolas folded into the zone; shaded: the checked gap. Constants {r.codataEdition}.
      </p>
    </div>
  );
}

export default function NfeCheckPage({ loaderData }: Route.ComponentProps) {
  const { data, formRef, recheck, busy } = useRecheckedForm<NfePageData>("/checks/nfe", loaderData, { debounceMs: DEBOUNCE_MS, keepEmpty: true });
  const { values } = loaderData;
  const rows = values.coefficients.length;


  // Field messages follow the latest check, so a fix clears its message without a reload.
  const shown = data.errors;

  return (
    <div className="space-y-6">
      <header className="max-w-3xl">
        <p className="label">Physics checks</p>
        <h1 className="mt-1 text-2xl font-semibold tracking-tight">Nearly-free-electron check</h1>
        <p className="mt-2 text-sm text-muted">
          Does a stated potential imply the stated gap? The potential is U(x) = Σ U_n e^{"{"}inGx{"}"} with G = 2π/a and U_−n = U_n, that is
          U(x) = U_0 + 2 Σ U_n cos(nGx): a potential written U0·cos(Gx) has U_1 = U0/2. The check diagonalises the central equation until the gap
          moves by less than 1 neV and compares it with the stated gap; first order (2|U_n|) is shown beside it. The same numbers come from
          <code className="mx-1 font-mono text-xs">npm run --silent bandledger -- nfe</code>and from POST /api/v1/checks/nfe.
        </p>
      </header>

      <div className="grid gap-6 lg:grid-cols-[22rem_minmax(0,1fr)]">
        <div className="space-y-4">
          <Form key={JSON.stringify(values)} method="get" ref={formRef} className="card space-y-4 p-5" onChange={recheck} noValidate aria-label="Inputs of the check">
            <LengthField id="nfe-period" name="period" label="Period a" value={values.period} unit={values.unit} unitLabel="Unit of the period" error={shown.period} />

            <fieldset>
              <legend className="label normal-case tracking-normal">Fourier coefficients U_n (eV)</legend>
              <div className="mt-1 space-y-2">
                {values.coefficients.map((c, i) => (
                  <div key={i}>
                    <div className="grid grid-cols-[4.5rem_1fr] gap-2">
                      <input name="n" inputMode="numeric" defaultValue={c.n} placeholder="n" className="field font-mono" aria-label={`Order n of coefficient ${i + 1}`} {...invalidProps(`nfe-c${i}-error`, shown[`coefficients.${i}`])} />
                      <input name="u" inputMode="decimal" defaultValue={c.u} placeholder="U_n in eV" className="field font-mono" aria-label={`U_n of coefficient ${i + 1} (eV)`} {...invalidProps(`nfe-c${i}-error`, shown[`coefficients.${i}`])} />
                    </div>
                    <FieldError id={`nfe-c${i}-error`} message={shown[`coefficients.${i}`]} />
                  </div>
                ))}
              </div>
              <FieldError id="nfe-coefficients-error" message={shown.coefficients} />
              {rows < loaderData.maxRows ? (
                <button type="submit" name="rows" value={rows + 1} className="btn mt-2 py-1 text-xs">Add a coefficient row</button>
              ) : null}
            </fieldset>

            <div className="grid grid-cols-2 gap-3">
              <div>
                <label htmlFor="nfe-gap" className="label normal-case tracking-normal">Gap index n</label>
                <input id="nfe-gap" name="gap" inputMode="numeric" defaultValue={values.gap} className="field mt-1 font-mono" {...invalidProps("nfe-gap-error", shown.gap)} />
                <FieldError id="nfe-gap-error" message={shown.gap} />
              </div>
              <div>
                <label htmlFor="nfe-mass" className="label normal-case tracking-normal">Mass (m₀)</label>
                <input id="nfe-mass" name="mass" inputMode="decimal" defaultValue={values.mass} className="field mt-1 font-mono" {...invalidProps("nfe-mass-error", shown.mass)} />
                <FieldError id="nfe-mass-error" message={shown.mass} />
              </div>
              <div>
                <label htmlFor="nfe-stated" className="label normal-case tracking-normal">Stated gap (eV)</label>
                <input id="nfe-stated" name="stated" inputMode="decimal" defaultValue={values.stated} placeholder="optional" className="field mt-1 font-mono" {...invalidProps("nfe-stated-error", shown.stated)} />
                <FieldError id="nfe-stated-error" message={shown.stated} />
              </div>
              <div>
                <label htmlFor="nfe-tolerance" className="label normal-case tracking-normal">Tolerance (eV)</label>
                <input id="nfe-tolerance" name="tolerance" inputMode="decimal" defaultValue={values.tolerance} className="field mt-1 font-mono" {...invalidProps("nfe-tolerance-error", shown.tolerance)} />
                <FieldError id="nfe-tolerance-error" message={shown.tolerance} />
              </div>
            </div>
            <p className="text-xs text-muted">Gap n lies between bands n and n + 1: at k = π/a for odd n, at k = 0 for even n.</p>
            <button type="submit" className="btn-primary">Check</button>
          </Form>

          <CheckExamples path="/checks/nfe" examples={loaderData.examples} />
        </div>

        <div aria-live="polite" aria-busy={busy || undefined}>
          <Results data={data} />
        </div>
      </div>
    </div>
  );
}

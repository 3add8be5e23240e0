import { Form } from "react-router";
import type { ReleaseEvaluationPage } from "~/.server/sets/evaluate";
import { evaluationFileName } from "~/domain/derived";
import { FieldError, FormError, invalidProps } from "~/components/field-error";
import { DerivedTable } from "./derived-table";

/**
 * "Evaluate at…" on a release page: a GET form (temperature, material, composition, substrate), then every derived
 * value of the pinned revisions with its GUM uncertainty, and downloads of the same JSON and CSV the API and
 * `bandledger evaluate` give.
 */
export function ReleaseEvaluation({ page, apiPath, refText }: { page: ReleaseEvaluationPage; apiPath: string; refText: string }) {
  const { form, options, evaluation } = page;
  const e = form.errors;
  const v = form.values;
  const command = evaluation
    ? [
        `npm run --silent bandledger -- evaluate ${refText} --temperature ${evaluation.conditions.temperatureK}`,
        evaluation.conditions.material ? `--material ${evaluation.conditions.material}` : null,
        evaluation.conditions.x ? `--x ${evaluation.conditions.x}` : null,
        evaluation.conditions.substrate ? `--substrate ${evaluation.conditions.substrate}` : null,
        evaluation.conditions.missingBowing === "linear" ? "--missing-bowing linear" : null,
        `--out ${evaluationFileName(evaluation, "json")}`,
      ].filter(Boolean).join(" ")
    : null;
  return (
    <section id="evaluate" className="card space-y-4 p-5" aria-labelledby="evaluate-title">
      <div className="flex flex-wrap items-baseline gap-x-3">
        <h2 id="evaluate-title" className="text-lg font-semibold">Evaluate at…</h2>
        <p className="text-sm text-muted">
          The values a simulation needs at its temperature and composition, derived from this release's pinned revisions only, each with its
          standard uncertainty propagated by the GUM (“± not stated” where the revisions state none).
        </p>
      </div>
      <FormError message={e.query} />
      <Form method="get" preventScrollReset className="flex flex-wrap items-start gap-3" aria-label="Conditions of the evaluation">
        <div>
          <label htmlFor="evaluate-temperature" className="label">Temperature (K)</label>
          <input id="evaluate-temperature" name="temperature" inputMode="decimal" defaultValue={v.temperature || "300"} className="field mt-1 w-28 font-mono" {...invalidProps("evaluate-temperature-error", e.temperature)} />
          <FieldError id="evaluate-temperature-error" message={e.temperature} />
        </div>
        <div>
          <label htmlFor="evaluate-material" className="label">Material</label>
          <select id="evaluate-material" name="material" defaultValue={v.material} className="field mt-1 w-56" {...invalidProps("evaluate-material-error", e.material)}>
            <option value="">every material</option>
            {options.materials.map((m) => (
              <option key={m.key} value={m.key}>{m.key}{m.alloy ? " (alloy)" : ""} — {m.name}</option>
            ))}
          </select>
          <FieldError id="evaluate-material-error" message={e.material} />
        </div>
        <div>
          <label htmlFor="evaluate-x" className="label">Composition x (alloys)</label>
          <input id="evaluate-x" name="x" inputMode="decimal" defaultValue={v.x} className="field mt-1 w-28 font-mono" {...invalidProps("evaluate-x-error", e.x)} />
          <FieldError id="evaluate-x-error" message={e.x} />
        </div>
        <div>
          <label htmlFor="evaluate-substrate" className="label">Substrate</label>
          <select id="evaluate-substrate" name="substrate" defaultValue={v.substrate} className="field mt-1 w-56" {...invalidProps("evaluate-substrate-error", e.substrate)}>
            <option value="">none</option>
            {options.substrates.map((s) => (
              <option key={s.key} value={s.key}>{s.key} — {s.name}</option>
            ))}
          </select>
          <FieldError id="evaluate-substrate-error" message={e.substrate} />
        </div>
        <div className="pt-6">
          <label className="flex items-center gap-2 text-sm">
            <input type="checkbox" name="missingBowing" value="linear" defaultChecked={v.missingBowing === "linear"} />
            interpolate linearly where a bowing parameter is missing
          </label>
          <FieldError id="evaluate-bowing-error" message={e.missingBowing} />
        </div>
        <div className="pt-5">
          <button type="submit" className="btn-primary">Evaluate</button>
        </div>
      </Form>

      {evaluation ? (
        <div className="space-y-5" data-testid="evaluation">
          <div className="flex flex-wrap items-center gap-2">
            <a className="btn no-underline" href={`${apiPath}?${page.query}&format=json`} download={evaluationFileName(evaluation, "json")}>Download this evaluation (JSON)</a>
            <a className="btn no-underline" href={`${apiPath}?${page.query}&format=csv`} download={evaluationFileName(evaluation, "csv")}>Download this evaluation (CSV)</a>
            <span className="text-xs text-muted">
              computed from release sha256 <code className="font-mono">{evaluation.release.sha256.slice(0, 16)}…</code> with Bandledger {evaluation.evaluatedWith.bandledgerVersion},
              {" "}{evaluation.evaluatedWith.codataEdition}
            </span>
          </div>
          <p className="text-sm text-warn">{evaluation.caution}</p>
          {evaluation.materials.map((m) => (
            <div key={m.key} className="space-y-2" data-material={m.key}>
              <h3 className="font-semibold">
                {m.key} <span className="font-normal text-muted">{m.formula}{m.composition !== null ? `, x = ${m.composition}` : ""}{m.substrate ? ` on ${m.substrate}` : ""}</span>
              </h3>
              {m.values.length ? <DerivedTable items={m.values} label={`Evaluated values of ${m.key}`} /> : null}
              {m.missing.length ? (
                <ul className="list-disc pl-5 text-sm text-muted" aria-label={`Not derived for ${m.key}`}>
                  {m.missing.map((why) => (
                    <li key={why}>{why}</li>
                  ))}
                </ul>
              ) : null}
            </div>
          ))}
          {command ? (
            <p className="text-sm text-muted">
              The same file from a pipeline: <code className="font-mono">{command}</code>
            </p>
          ) : null}
        </div>
      ) : null}
    </section>
  );
}

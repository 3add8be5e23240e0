import { useEffect, useMemo, useRef, useState } from "react";
import { Form, useFetcher, useNavigation, useSubmit } from "react-router";
import { FieldError, FormError, invalidProps } from "~/components/field-error";
import {
  payloadToFormData, SOURCE_KIND_KEYS, SOURCE_KIND_LABELS, validateProposal, type ProposalCatalogue, type ProposalFieldErrors, type ProposalKind,
  type ProposalPayload,
} from "~/domain/proposal-schemas";
import { VALLEY_KEYS, VALLEY_LABELS } from "~/domain/quantities";
import { METHOD_KEYS, METHOD_LABELS } from "~/domain/registry-schemas";
import type { RevisionView } from "~/domain/revision-view";
import { convertToCanonical, displayUnit } from "~/domain/units";
import { LiveCheck } from "~/components/checks";
import { RevisionCard } from "./revision-card";

export type FormRecordInfo = {
  id: number;
  status: "active" | "retired";
  materialKey: string;
  materialName: string;
  quantityName: string;
  conditions: string;
  unit: string;
  current: RevisionView | null;
};

/** What the autosave and submit actions answer (the shape of proposalFormAction's data). */
export type FormActionData = {
  intent: string;
  proposalId: number | null;
  payload: ProposalPayload | null;
  errors: ProposalFieldErrors;
  message: string | null;
  savedAt: string | null;
  sessionExpired: boolean;
};

const AUTOSAVE_MS = 1200;

function setPath(p: ProposalPayload, path: string, value: string): ProposalPayload {
  const [head, second, third] = path.split(".");
  if (head === "source") return { ...p, source: { ...p.source, [second]: value } };
  if (head === "potentialCoefficients") {
    const rows = p.potentialCoefficients.slice();
    rows[Number(second)] = { ...(rows[Number(second)] ?? { n: "", valueEv: "" }), [third]: value };
    return { ...p, potentialCoefficients: rows };
  }
  return { ...p, [head]: value } as ProposalPayload;
}

function unitLabel(unit: string): string {
  return displayUnit(unit) || "dimensionless";
}

/**
 * The proposal form. Its state is the payload itself (ProposalPayload), checked by the shared schema on every
 * change and saved to the server by a debounced fetcher; a live consistency check can read the same state.
 * Without JavaScript it is a plain form whose field names are the payload paths.
 */
export function ProposalForm(props: {
  action: string;
  catalogue: ProposalCatalogue;
  kind: ProposalKind;
  initial: ProposalPayload;
  proposalId: number | null;
  record: FormRecordInfo | null;
  savedAt: string | null;
  actionData: FormActionData | undefined;
}) {
  const { catalogue, kind, record, action } = props;
  const [payload, setPayload] = useState<ProposalPayload>(props.actionData?.payload ?? props.initial);
  const [proposalId, setProposalId] = useState<number | null>(props.actionData?.proposalId ?? props.proposalId);
  const [touched, setTouched] = useState<Set<string>>(() => new Set());
  const [serverErrors, setServerErrors] = useState<ProposalFieldErrors>(props.actionData?.errors ?? {});
  const fetcher = useFetcher<FormActionData>();
  const navigation = useNavigation();
  const dirty = useRef(false);
  const pendingSave = useRef<ReturnType<typeof setTimeout> | null>(null);
  // Read when a save fires, so a save never starts a second draft after the first one got its id.
  const idRef = useRef(proposalId);
  idRef.current = proposalId;

  useEffect(() => setServerErrors(props.actionData?.errors ?? {}), [props.actionData]);
  useEffect(() => {
    if (props.actionData?.proposalId) setProposalId(props.actionData.proposalId);
  }, [props.actionData]);
  useEffect(() => {
    if (fetcher.data?.proposalId) setProposalId(fetcher.data.proposalId);
  }, [fetcher.data]);
  useEffect(() => {
    if (!dirty.current) return;
    pendingSave.current = setTimeout(() => {
      pendingSave.current = null;
      dirty.current = false;
      const form = payloadToFormData(payload);
      form.set("intent", "autosave");
      if (idRef.current) form.set("proposalId", String(idRef.current));
      fetcher.submit(form, { method: "post", action });
    }, AUTOSAVE_MS);
    return () => {
      if (pendingSave.current) clearTimeout(pendingSave.current);
    };
    // The fetcher object changes with every state; only a change of what was typed starts a save.
  }, [payload]);

  // A submission saves what was typed itself; a save still waiting would only race it. A submission while
  // the first save is on its way (the draft has no id yet) waits for that id, so one draft is made, not two.
  const formRef = useRef<HTMLFormElement>(null);
  const submit = useSubmit();
  const [queuedIntent, setQueuedIntent] = useState<string | null>(null);
  const onSubmit = (event: React.FormEvent<HTMLFormElement>) => {
    if (pendingSave.current) clearTimeout(pendingSave.current);
    pendingSave.current = null;
    dirty.current = false;
    if (!idRef.current && fetcher.state !== "idle") {
      event.preventDefault();
      setQueuedIntent(((event.nativeEvent as SubmitEvent).submitter as HTMLButtonElement | null)?.value ?? "save");
    }
  };
  useEffect(() => {
    if (!queuedIntent || fetcher.state !== "idle" || !formRef.current) return;
    const form = new FormData(formRef.current);
    form.set("intent", queuedIntent);
    const id = fetcher.data?.proposalId ?? idRef.current;
    if (id) form.set("proposalId", String(id));
    setQueuedIntent(null);
    submit(form, { method: "post", action });
  }, [queuedIntent, fetcher.state]);

  // A refused submission saved the draft before it was refused; an autosave after it is newer news.
  const refused = props.actionData?.intent === "submit" ? props.actionData.savedAt : null;
  const refusedSave = refused && !(fetcher.data?.savedAt && fetcher.data.savedAt > refused) ? refused : null;

  const check = useMemo(() => validateProposal(payload, catalogue), [payload, catalogue]);
  const clientErrors: ProposalFieldErrors = check.ok ? {} : check.errors;
  const errorOf = (path: string) => serverErrors[path] ?? (touched.has(path) ? clientErrors[path] : undefined);

  const change = (path: string, value: string) => {
    dirty.current = true;
    setPayload((p) => setPath(p, path, value));
    setServerErrors((e) => {
      if (!(path in e)) return e;
      const { [path]: _gone, ...rest } = e;
      return rest;
    });
  };
  const touch = (path: string) => setTouched((t) => (t.has(path) ? t : new Set(t).add(path)));

  const quantity = catalogue.quantities.find((q) => q.key === payload.quantity.trim());
  const material = catalogue.materials.find((m) => m.key === payload.material.trim());
  const isNew = kind === "new_record";
  const isRetirement = kind === "retirement";
  const families = [...new Set(catalogue.materials.map((m) => m.familyName))];
  const temperatureChoice = !quantity || quantity.temperature === "fit-or-stated";
  const wantsTemperature = !quantity || quantity.temperature === "stated" || (quantity.temperature === "fit-or-stated" && payload.temperatureMode === "stated");
  const conversion = quantity && payload.value.trim() ? convertToCanonical(payload.value, payload.unit, quantity.acceptedUnits) : null;
  const coefficientRows = [...payload.potentialCoefficients, { n: "", valueEv: "" }];
  const saving = fetcher.state !== "idle";
  const submitting = navigation.state === "submitting" || queuedIntent !== null;

  const text = (path: string, label: string, options: { hint?: string; className?: string; inputMode?: "decimal" | "text"; placeholder?: string } = {}) => {
    const id = `f-${path.replace(/\./g, "-")}`;
    const value = path.split(".").reduce<unknown>((o, k) => (o as Record<string, unknown>)?.[k], payload) as string | undefined;
    return (
      <div className={options.className}>
        <label htmlFor={id} className="label">{label}</label>
        <input
          id={id}
          name={path}
          value={value ?? ""}
          inputMode={options.inputMode}
          placeholder={options.placeholder}
          onChange={(e) => change(path, e.target.value)}
          onBlur={() => touch(path)}
          className="field mt-1"
          {...invalidProps(`${id}-error`, errorOf(path))}
          aria-describedby={[options.hint ? `${id}-hint` : null, errorOf(path) ? `${id}-error` : null].filter(Boolean).join(" ") || undefined}
        />
        {options.hint ? <p id={`${id}-hint`} className="mt-1 text-xs text-muted">{options.hint}</p> : null}
        <FieldError id={`${id}-error`} message={errorOf(path)} />
      </div>
    );
  };

  const select = (path: string, label: string, options: { value: string; label: string; group?: string }[], placeholder: string) => {
    const id = `f-${path.replace(/\./g, "-")}`;
    const value = (payload as unknown as Record<string, string>)[path] ?? "";
    const groups = [...new Set(options.map((o) => o.group ?? ""))];
    return (
      <div>
        <label htmlFor={id} className="label">{label}</label>
        <select id={id} name={path} value={value} onChange={(e) => { change(path, e.target.value); touch(path); }} className="field mt-1" {...invalidProps(`${id}-error`, errorOf(path))}>
          <option value="">{placeholder}</option>
          {groups.map((g) =>
            g ? (
              <optgroup key={g} label={g}>
                {options.filter((o) => o.group === g).map((o) => <option key={o.value} value={o.value}>{o.label}</option>)}
              </optgroup>
            ) : (
              options.filter((o) => !o.group).map((o) => <option key={o.value} value={o.value}>{o.label}</option>)
            ),
          )}
        </select>
        <FieldError id={`${id}-error`} message={errorOf(path)} />
      </div>
    );
  };

  return (
    <Form method="post" action={action} className="space-y-6" noValidate aria-label="Proposal" onSubmit={onSubmit} ref={formRef}>
      {proposalId ? <input type="hidden" name="proposalId" value={proposalId} /> : null}
      <input type="hidden" name="kind" value={kind} />

      {props.actionData?.intent !== "autosave" ? <FormError message={props.actionData?.message} /> : null}

      {record ? (
        <section className="grid items-start gap-4 lg:grid-cols-[1fr_1fr]" aria-label="The record this proposal changes">
          <div className="card p-4 text-sm">
            <h2 className="label">Record {record.id}</h2>
            <p className="mt-2 text-base font-medium">{record.materialKey} · {record.quantityName}</p>
            <p className="text-muted">{record.conditions}{record.status === "retired" ? " · retired" : ""}</p>
            <input type="hidden" name="recordId" value={payload.recordId} />
            <input type="hidden" name="material" value={payload.material} />
            <input type="hidden" name="quantity" value={payload.quantity} />
            <FieldError id="f-recordId-error" message={errorOf("recordId")} />
          </div>
          <RevisionCard title="Current revision" revision={record.current} tone="current" emptyText="The record has no revision yet." />
        </section>
      ) : null}

      {isNew ? (
        <fieldset className="card grid gap-4 p-4 sm:grid-cols-2">
          <legend className="px-1 text-sm font-semibold">What the record is about</legend>
          {select("material", "Material", catalogue.materials.map((m) => ({ value: m.key, label: m.key === m.formula ? `${m.key} — ${m.name}` : `${m.key} — ${m.formula}`, group: m.familyName })), families.length ? "Choose a material" : "No materials yet")}
          {select("quantity", "Quantity", catalogue.quantities.filter((q) => !q.storedWith).map((q) => ({ value: q.key, label: `${q.symbol} — ${q.name}` })), "Choose a quantity")}
          {quantity ? <p className="text-xs text-muted sm:col-span-2">{quantity.description}</p> : null}
          {temperatureChoice ? (
            <fieldset className="sm:col-span-2">
              <legend className="label">Temperature</legend>
              <div className="mt-1 flex flex-wrap gap-4 text-sm">
                {([["stated", "At a stated temperature"], ["fit0", "0 K fit parameter"]] as const).map(([v, l]) => (
                  <label key={v} className="flex items-center gap-2">
                    <input type="radio" name="temperatureMode" value={v} checked={payload.temperatureMode === v} onChange={() => change("temperatureMode", v)} />
                    {l}
                  </label>
                ))}
              </div>
            </fieldset>
          ) : (
            <input type="hidden" name="temperatureMode" value={quantity?.temperature === "stated" ? "stated" : "fit0"} />
          )}
          {wantsTemperature ? text("temperatureK", "Temperature (K)", { inputMode: "decimal", placeholder: "300" }) : null}
          {quantity?.temperature === "fit" ? <p className="text-sm text-muted">{quantity.name} is a parameter of a temperature fit: it is kept as a 0 K fit; state its fit range below.</p> : null}
          {!quantity || quantity.valleys.length ? select("valley", "Valley", (quantity?.valleys ?? VALLEY_KEYS).map((v) => ({ value: v, label: VALLEY_LABELS[v] })), "Choose the valley") : null}
          {(!material || material.kind === "alloy") && (!quantity || quantity.composition === "alloy") ? text("composition", "Composition x (alloys)", { inputMode: "decimal", placeholder: "0.3", hint: "Fraction of the first end member, between 0 and 1." }) : null}
        </fieldset>
      ) : null}

      {isRetirement ? (
        <fieldset className="card p-4">
          <legend className="px-1 text-sm font-semibold">Why retire this record</legend>
          <label htmlFor="f-reason" className="sr-only">Reason</label>
          <textarea id="f-reason" name="reason" rows={4} value={payload.reason} onChange={(e) => change("reason", e.target.value)} onBlur={() => touch("reason")} className="field" {...invalidProps("f-reason-error", errorOf("reason"))} />
          <FieldError id="f-reason-error" message={errorOf("reason")} />
        </fieldset>
      ) : (
        <fieldset className="card grid gap-4 p-4 sm:grid-cols-[2fr_1fr_1.5fr]">
          <legend className="px-1 text-sm font-semibold">The value</legend>
          {text("value", "Value", { inputMode: "decimal", placeholder: quantity ? `e.g. in ${unitLabel(quantity.canonicalUnit)}` : "", hint: conversion?.ok ? `Kept as ${conversion.value.canonical} ${unitLabel(quantity!.canonicalUnit)}, ${conversion.value.significantDigits} significant digits.` : "Type it as the source states it; the unit converts it exactly." })}
          {quantity ? (
            <div>
              <label htmlFor="f-unit" className="label">Unit</label>
              <select id="f-unit" name="unit" value={payload.unit} onChange={(e) => { change("unit", e.target.value); touch("unit"); }} className="field mt-1" {...invalidProps("f-unit-error", errorOf("unit"))}>
                <option value="">Choose</option>
                {quantity.acceptedUnits.map((u) => <option key={u.unit} value={u.unit}>{unitLabel(u.unit)}</option>)}
              </select>
              <FieldError id="f-unit-error" message={errorOf("unit")} />
            </div>
          ) : (
            text("unit", "Unit", { placeholder: "eV, meV, Å, nm, m0" })
          )}
          {text("uncertainty", "Uncertainty (same unit)", { inputMode: "decimal", placeholder: "optional" })}
          {select("method", "Method", METHOD_KEYS.map((m) => ({ value: m, label: METHOD_LABELS[m] })), "How was it obtained?")}
          {!quantity || quantity.fitRange ? (
            <>
              {text("validFromK", "Fit valid from (K)", { inputMode: "decimal", placeholder: "optional" })}
              {text("validToK", "Fit valid to (K)", { inputMode: "decimal", placeholder: "optional" })}
            </>
          ) : null}
        </fieldset>
      )}

      {!isRetirement && (!quantity || quantity.key === "eg") ? (
        <fieldset className="card p-4">
          <legend className="px-1 text-sm font-semibold">Potential coefficients behind the gap (optional)</legend>
          <p className="text-xs text-muted">Fourier coefficients U_n of the periodic potential, in eV, with the period a they belong to; the nearly-free-electron check compares them with the gap.</p>
          <div className="mt-3 grid gap-3 sm:grid-cols-[6rem_1fr] lg:max-w-xl">
            {coefficientRows.map((_, i) => (
              <div key={i} className="contents">
                {text(`potentialCoefficients.${i}.n`, `n (row ${i + 1})`, { inputMode: "decimal", placeholder: String(i + 1) })}
                {text(`potentialCoefficients.${i}.valueEv`, `U_n (eV, row ${i + 1})`, { inputMode: "decimal", placeholder: "e.g. 0.1" })}
                {errorOf(`potentialCoefficients.${i}`) ? <p className="text-sm text-fail sm:col-span-2" role="alert">{errorOf(`potentialCoefficients.${i}`)}</p> : null}
              </div>
            ))}
          </div>
          <div className="mt-3 max-w-xs">{text("periodAngstrom", "Period a (Å)", { inputMode: "decimal", placeholder: "the lattice constant" })}</div>
          <FieldError id="f-potential-error" message={errorOf("potentialCoefficients")} />
        </fieldset>
      ) : null}

      {!isRetirement ? <LiveCheck payload={payload} /> : null}

      <fieldset className="card grid gap-4 p-4 sm:grid-cols-2">
        <legend className="px-1 text-sm font-semibold">Source{isRetirement ? " (optional)" : ""}</legend>
        <div className="sm:col-span-2">
          <span className="label">Kind</span>
          <div className="mt-1 flex flex-wrap gap-4 text-sm" role="radiogroup" aria-label="Kind of source">
            {SOURCE_KIND_KEYS.map((k) => (
              <label key={k} className="flex items-center gap-2">
                <input type="radio" name="source.kind" value={k} checked={payload.source.kind === k} onChange={() => change("source.kind", k)} />
                {SOURCE_KIND_LABELS[k]}
              </label>
            ))}
          </div>
          <FieldError id="f-source-kind-error" message={errorOf("source.kind")} />
        </div>
        {payload.source.kind === "bibtex" ? (
          <div className="sm:col-span-2">
            <label htmlFor="f-source-bibtex" className="label">BibTeX entry</label>
            <textarea id="f-source-bibtex" name="source.bibtex" rows={7} value={payload.source.bibtex} onChange={(e) => change("source.bibtex", e.target.value)} onBlur={() => touch("source.bibtex")} className="field mt-1 font-mono text-xs" placeholder="@article{key, author = {…}, title = {…}, year = {…}, doi = {…}}" {...invalidProps("f-source-bibtex-error", errorOf("source.bibtex"))} />
            <FieldError id="f-source-bibtex-error" message={errorOf("source.bibtex")} />
          </div>
        ) : (
          <>
            {payload.source.kind === "doi"
              ? text("source.doi", "DOI", { placeholder: "10.1063/1.1368156", hint: "The format is checked; nothing is looked up on the network." })
              : text("source.reportNumber", "Report number", { placeholder: "KD-EPI-2026-014" })}
            {text("source.title", "Title")}
            {text("source.authors", "Authors", { placeholder: "optional" })}
            {text("source.year", "Year", { inputMode: "decimal", placeholder: "optional" })}
          </>
        )}
        {text("locator", "Where in the source", { className: "sm:col-span-2", placeholder: "page, table or figure, e.g. Table 2, or Fig. 4 and p. 12" })}
      </fieldset>

      {!isRetirement ? (
        <fieldset className="card p-4">
          <legend className="px-1 text-sm font-semibold">Notes</legend>
          <label htmlFor="f-notes" className="sr-only">Notes</label>
          <textarea id="f-notes" name="notes" rows={3} value={payload.notes} onChange={(e) => change("notes", e.target.value)} className="field" placeholder="How the value was obtained, what it assumes, what to watch for." />
          <FieldError id="f-notes-error" message={errorOf("notes")} />
        </fieldset>
      ) : null}

      <div className="flex flex-wrap items-center gap-3">
        <button type="submit" name="intent" value="submit" className="btn-primary" disabled={submitting}>Submit for a decision</button>
        <button type="submit" name="intent" value="save" className="btn" disabled={submitting}>Save draft</button>
        <p className="text-sm text-muted" role="status" aria-live="polite" data-testid="autosave-status">
          {fetcher.data?.sessionExpired ? (
            <span className="text-warn">
              {fetcher.data.message} <a href="/sign-in?returnTo=%2Fproposals%2Frestore">Sign in again</a>
            </span>
          ) : saving ? (
            "Saving the draft…"
          ) : refusedSave ? (
            `Not submitted: what you typed is saved as a draft (${refusedSave.slice(11, 19)} UTC). Correct the marked fields and submit again.`
          ) : fetcher.data?.savedAt ? (
            `Draft saved at ${fetcher.data.savedAt.slice(11, 19)} UTC.`
          ) : props.savedAt ? (
            `Draft saved ${props.savedAt.slice(0, 10)} ${props.savedAt.slice(11, 16)} UTC; changes save themselves.`
          ) : (
            "Nothing saved yet; the draft saves itself as you type."
          )}
        </p>
      </div>
    </Form>
  );
}

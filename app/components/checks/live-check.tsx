import { useEffect, useRef } from "react";
import { useFetcher } from "react-router";
import type { CheckReportResponse } from "~/domain/check-report";
import { payloadToFormData, type ProposalPayload } from "~/domain/proposal-schemas";
import { CheckReportView } from "./check-report-view";

export const LIVE_CHECK_URL = "/checks/report";
export const LIVE_CHECK_DELAY_MS = 400;

// Only the fields the checks read travel with each keystroke; the source, notes and BibTeX stay in the form.
const CHECKED_FIELDS = /^(kind|recordId|material|quantity|temperatureMode|temperatureK|valley|composition|value|unit|periodAngstrom|validFromK|validToK|potentialCoefficients\.\d{1,2}\.(n|valueEv))$/;

function checkedFields(source: FormData): URLSearchParams {
  const out = new URLSearchParams();
  for (const [name, value] of source.entries()) if (typeof value === "string" && CHECKED_FIELDS.test(name)) out.append(name, value);
  return out;
}

/**
 * The check report of a proposal while it is typed: after each pause of `delayMs` the fields the checks
 * read (from the form, or the given payload) go to /checks/report through a fetcher, so the page never
 * reloads. Give `formId` for a form whose fields are named by payload path ("value",
 * "potentialCoefficients.0.valueEv"), or `payload` for a form that keeps its state in React.
 */
export function useLiveCheck(options: { formId?: string; payload?: ProposalPayload; delayMs?: number; initial?: CheckReportResponse | null }) {
  const { formId, payload, delayMs = LIVE_CHECK_DELAY_MS } = options;
  const fetcher = useFetcher<CheckReportResponse>();
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const last = useRef<string | null>(null);
  const load = useRef(fetcher.load);
  load.current = fetcher.load;

  // A GET through fetcher.load: unlike a POST it does not make the page's own loaders revalidate.
  const schedule = (query: URLSearchParams) => {
    const signature = query.toString();
    if (signature === last.current) return;
    if (timer.current) clearTimeout(timer.current);
    timer.current = setTimeout(() => {
      last.current = signature;
      void load.current(`${LIVE_CHECK_URL}?${signature}`);
    }, delayMs);
  };
  const scheduleRef = useRef(schedule);
  scheduleRef.current = schedule;

  useEffect(() => {
    if (!formId) return;
    const form = document.getElementById(formId);
    if (!(form instanceof HTMLFormElement)) return;
    const onChange = () => scheduleRef.current(checkedFields(new FormData(form)));
    form.addEventListener("input", onChange);
    form.addEventListener("change", onChange);
    if (!options.initial) onChange();
    return () => {
      form.removeEventListener("input", onChange);
      form.removeEventListener("change", onChange);
    };
    // The listeners read the latest schedule through its ref.
  }, [formId]);

  const payloadKey = payload ? JSON.stringify(payload) : null;
  useEffect(() => {
    if (!payload) return;
    scheduleRef.current(checkedFields(payloadToFormData(payload)));
  }, [payloadKey]);

  useEffect(() => () => {
    if (timer.current) clearTimeout(timer.current);
  }, []);

  return {
    response: fetcher.data ?? options.initial ?? null,
    busy: fetcher.state !== "idle",
  };
}

/** The live check report beside a proposal's value fields. */
export function LiveCheck(props: { formId?: string; payload?: ProposalPayload; initial?: CheckReportResponse | null; delayMs?: number; plot?: boolean }) {
  const { response, busy } = useLiveCheck(props);
  return (
    <div aria-live="polite" data-live-check="">
      <CheckReportView
        title="Checks while you type"
        report={response?.report ?? null}
        message={response ? response.message : "The checks appear here as you type the value."}
        plot={props.plot ?? true}
        busy={busy}
      />
    </div>
  );
}

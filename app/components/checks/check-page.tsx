import { useEffect, useRef, useState } from "react";
import { Link, useFetcher } from "react-router";
import { FieldError, invalidProps } from "../field-error";

// What the physics check pages (/checks/nfe, /checks/epm) share: the form re-checked while one types, and the list
// of worked examples beside it.

/**
 * The page's data as the latest answer has it: a fetcher result while typing (the form is sent `debounceMs` after
 * the last change, with live=1 so that its field messages answer 200), the loader's after a submit or a link.
 * `keepEmpty: false` leaves empty fields out of the query, as the page's own links do.
 */
export function useRecheckedForm<T>(path: string, loaderData: T, options: { debounceMs: number; keepEmpty: boolean }) {
  const fetcher = useFetcher();
  const formRef = useRef<HTMLFormElement>(null);
  const timer = useRef<ReturnType<typeof setTimeout> | null>(null);
  const [live, setLive] = useState<T | null>(null);
  useEffect(() => setLive(null), [loaderData]);
  useEffect(() => {
    if (fetcher.data) setLive(fetcher.data as T);
  }, [fetcher.data]);
  useEffect(() => () => {
    if (timer.current) clearTimeout(timer.current);
  }, []);

  const recheck = () => {
    if (timer.current) clearTimeout(timer.current);
    timer.current = setTimeout(() => {
      if (!formRef.current) return;
      const params = new URLSearchParams();
      for (const [k, v] of new FormData(formRef.current).entries()) {
        if (typeof v === "string" && (options.keepEmpty || v !== "")) params.append(k, v);
      }
      // live=1: a check while typing answers its messages with a 200, so the console does not log every keystroke as a failed request.
      params.set("live", "1");
      void fetcher.load(`${path}?${params.toString()}`);
    }, options.debounceMs);
  };

  return { data: live ?? loaderData, formRef, recheck, busy: fetcher.state !== "idle" };
}

export type CheckExample = { label: string; hint: string; query: string };

/** Worked examples: each a link to the page with its inputs filled in. */
export function CheckExamples({ path, examples }: { path: string; examples: readonly CheckExample[] }) {
  return (
    <nav aria-label="Examples" className="card p-4 text-sm">
      <p className="label">Examples</p>
      <ul className="mt-2 space-y-2">
        {examples.map((e) => (
          <li key={e.label}>
            <Link to={`${path}?${e.query}`}>{e.label}</Link>
            <span className="block text-xs text-muted">{e.hint}</span>
          </li>
        ))}
      </ul>
    </nav>
  );
}

/** A length with its unit (Å or nm), its message under it: the period of the NFE check, the lattice constant of the crystal check. */
export function LengthField({ id, name, label, value, unit, unitLabel, error }: {
  id: string; name: string; label: string; value: string; unit: string; unitLabel: string; error: string | undefined;
}) {
  return (
    <div>
      <label htmlFor={id} className="label normal-case tracking-normal">{label}</label>
      <div className="mt-1 flex gap-2">
        <input id={id} name={name} inputMode="decimal" defaultValue={value} className="field font-mono" {...invalidProps(`${id}-error`, error)} />
        <select name="unit" defaultValue={unit} className="field w-24" aria-label={unitLabel}>
          <option value="angstrom">Å</option>
          <option value="nm">nm</option>
        </select>
      </div>
      <FieldError id={`${id}-error`} message={error} />
    </div>
  );
}

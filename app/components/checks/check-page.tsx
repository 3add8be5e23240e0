import { useEffect, useRef, useState } from "react";
import { Link, useFetcher } from "react-router";

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

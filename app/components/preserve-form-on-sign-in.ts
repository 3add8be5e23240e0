import { useEffect, useRef, useState } from "react";
import { useLocation, useNavigation } from "react-router";

const KEY = "bandledger:kept-form";
const KEEP_MS = 60 * 60 * 1000;

type Kept = { path: string; formId: string; fields: [string, string][]; at: number; restore: boolean };

function read(): Kept | null {
  try {
    const raw = window.localStorage.getItem(KEY);
    if (!raw) return null;
    const kept = JSON.parse(raw) as Kept;
    if (Date.now() - kept.at > KEEP_MS) {
      window.localStorage.removeItem(KEY);
      return null;
    }
    return kept;
  } catch {
    return null;
  }
}

function write(kept: Kept | null) {
  try {
    if (kept) window.localStorage.setItem(KEY, JSON.stringify(kept));
    else window.localStorage.removeItem(KEY);
  } catch {
    /* storage full or disabled: the form is simply not kept */
  }
}

const SKIPPED = new Set(["hidden", "password", "file", "submit", "button", "reset"]);

function fieldsOf(form: HTMLFormElement): [string, string][] {
  const out: [string, string][] = [];
  for (const el of Array.from(form.elements)) {
    if (!(el instanceof HTMLInputElement || el instanceof HTMLTextAreaElement || el instanceof HTMLSelectElement) || !el.name) continue;
    if (el instanceof HTMLInputElement && (SKIPPED.has(el.type) || ((el.type === "checkbox" || el.type === "radio") && !el.checked))) continue;
    out.push([el.name, el.value]);
  }
  return out;
}

function setValue(el: HTMLInputElement | HTMLTextAreaElement | HTMLSelectElement, value: string) {
  // The prototype's setter plus an input event, so controlled React inputs see the change too.
  const setter = Object.getOwnPropertyDescriptor(Object.getPrototypeOf(el), "value")?.set;
  if (setter) setter.call(el, value);
  else el.value = value;
  el.dispatchEvent(new Event("input", { bubbles: true }));
  el.dispatchEvent(new Event("change", { bubbles: true }));
}

function restoreInto(form: HTMLFormElement, fields: [string, string][]) {
  const names = new Set(fields.map(([n]) => n));
  for (const el of Array.from(form.elements)) {
    if (!(el instanceof HTMLInputElement || el instanceof HTMLTextAreaElement || el instanceof HTMLSelectElement) || !names.has(el.name)) continue;
    if (el instanceof HTMLInputElement && SKIPPED.has(el.type)) continue;
    const values = fields.filter(([n]) => n === el.name).map(([, v]) => v);
    if (el instanceof HTMLInputElement && (el.type === "checkbox" || el.type === "radio")) {
      if (el.checked !== values.includes(el.value)) el.click();
    } else {
      setValue(el, values[0] ?? "");
    }
  }
}

// What was typed survives an expired session: kept on submit, marked by the sign-in page, restored here once.
export function usePreserveFormOnSignIn(formId: string) {
  const formRef = useRef<HTMLFormElement>(null);
  const location = useLocation();
  const navigation = useNavigation();
  const [restored, setRestored] = useState(false);
  const submitted = useRef(false);

  useEffect(() => {
    const form = formRef.current;
    if (!form) return;
    const kept = read();
    if (kept && kept.formId === formId && kept.path === location.pathname && kept.restore) {
      restoreInto(form, kept.fields);
      write(null);
      setRestored(true);
    } else if (kept && !kept.restore) {
      write(null);
    }
    const onSubmit = () => {
      submitted.current = true;
      setRestored(false);
      write({ path: location.pathname, formId, fields: fieldsOf(form), at: Date.now(), restore: false });
    };
    form.addEventListener("submit", onSubmit);
    return () => form.removeEventListener("submit", onSubmit);
  }, [formId, location.pathname]);

  // Still on this page once the submission settles: it was answered here, so nothing needs keeping.
  useEffect(() => {
    if (navigation.state === "idle" && submitted.current) {
      submitted.current = false;
      const kept = read();
      if (kept && !kept.restore && kept.formId === formId) write(null);
    }
  }, [navigation.state, formId]);

  return { formRef, restored };
}

// Called by the sign-in page with its returnTo: a form kept for that page is restored there after sign-in.
export function markKeptFormForRestore(returnTo: string) {
  const kept = read();
  if (!kept) return;
  const path = new URL(returnTo, window.location.origin).pathname;
  write(kept.path === path ? { ...kept, restore: true } : null);
}

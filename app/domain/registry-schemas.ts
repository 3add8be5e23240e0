import { z } from "zod";
import { parseDoi, parseReportNumber } from "./citations";
import { decimalColumnValue, parseExactDecimal, scaleExact } from "./exact-decimal";
import { smallestResolvablePeriodAngstrom } from "./physics/nfe";
import type { RevisionDetails } from "./revision-view";
import { checkRange, quantityByKey, type QuantityDefinition } from "./quantities";
import { convertToCanonical, findAcceptedUnit } from "./units";

export const METHOD_KEYS = ["measured", "calculated", "fitted", "compilation"] as const;
export type Method = (typeof METHOD_KEYS)[number];
export const METHOD_LABELS: Record<Method, string> = {
  measured: "measured",
  calculated: "calculated",
  fitted: "fitted",
  compilation: "review / compilation",
};

export const REGISTRY_SORTS = ["material", "quantity", "value", "temperature", "changed"] as const;
export type RegistrySort = (typeof REGISTRY_SORTS)[number];
export const PAGE_SIZES = [25, 50, 100] as const;
export const RECORD_STATUSES = ["active", "retired", "all"] as const;

const blankToUndefined = (v: unknown) => (typeof v === "string" && v.trim() === "" ? undefined : v);
const slug = z.preprocess(blankToUndefined, z.string().trim().max(64).regex(/^[A-Za-z0-9_().-]+$/).optional()).catch(undefined);

/** The registry view as it lives in the URL: a shared link opens the same filters, sort and page. Bad values fall back to defaults. */
export const registryViewSchema = z.object({
  family: slug,
  material: slug,
  quantity: slug,
  method: z.preprocess(blankToUndefined, z.enum(METHOD_KEYS).optional()).catch(undefined),
  status: z.enum(RECORD_STATUSES).default("active").catch("active"),
  q: z.preprocess(blankToUndefined, z.string().trim().max(100).optional()).catch(undefined),
  sort: z.enum(REGISTRY_SORTS).default("material").catch("material"),
  dir: z.enum(["asc", "desc"]).default("asc").catch("asc"),
  page: z.coerce.number().int().min(1).max(1_000_000).default(1).catch(1),
  size: z.coerce.number().int().refine((n) => (PAGE_SIZES as readonly number[]).includes(n)).default(50).catch(50),
});
export type RegistryView = z.infer<typeof registryViewSchema>;

export function parseRegistryView(params: URLSearchParams): RegistryView {
  return registryViewSchema.parse(Object.fromEntries(params));
}

const VIEW_DEFAULTS: Partial<Record<keyof RegistryView, string>> = { status: "active", sort: "material", dir: "asc", page: "1", size: "50" };

/** The search string of a view with some fields changed; defaults are left out so links stay short. */
export function registryViewSearch(view: RegistryView, changes: Partial<RegistryView> = {}): string {
  const merged = { ...view, ...changes } as Record<string, unknown>;
  const params = new URLSearchParams();
  for (const key of ["family", "material", "quantity", "method", "status", "q", "sort", "dir", "page", "size"] as const) {
    const v = merged[key];
    if (v === undefined || v === null || v === "") continue;
    if (VIEW_DEFAULTS[key] === String(v)) continue;
    params.set(key, String(v));
  }
  const s = params.toString();
  return s ? `?${s}` : "";
}

/** The nearly-free-electron check (band mass m0, gap 1) cannot resolve a gap on a shorter period, rounded up to 3 digits. */
const SMALLEST_PERIOD_ANGSTROM = Number(smallestResolvablePeriodAngstrom(1, 1).toPrecision(3));

export const positiveId = z.coerce.number().int().positive().max(2_147_483_647);

/** The record whose history shows two revisions side by side: ?cmp=<record>&from=<revision>&to=<revision> (the pair: revision-pair.ts). */
export const compareSchema = z.object({
  cmp: positiveId.optional().catch(undefined),
});

// Every cap with a message a person reads in the form, the CSV preview and the API.
const atMost = (max: number) => `At most ${max} characters.`;
const optionalText = (max: number) => z.preprocess(blankToUndefined, z.string().trim().max(max, atMost(max)).optional());

/** A revision as typed in a form, a CSV row or an API call: every number a string, converted exactly later. */
export const revisionInputSchema = z.object({
  value: z.string().trim().min(1, "Enter the value.").max(64, atMost(64)),
  unit: z.string().trim().max(20, atMost(20)).default(""),
  uncertainty: optionalText(64),
  method: z.enum(METHOD_KEYS, { message: "Choose how the value was obtained." }),
  sourceId: positiveId,
  locator: optionalText(200),
  notes: optionalText(4000),
  potentialCoefficients: z.array(z.object({ n: z.coerce.number().int().min(1).max(50), value: z.string().trim().min(1).max(64) })).max(50).optional(),
  periodAngstrom: optionalText(40),
  validFromK: optionalText(20),
  validToK: optionalText(20),
});
export type RevisionInput = z.input<typeof revisionInputSchema>;

/** A revision as it will be stored: the value converted exactly, and the details every view of a revision shows. */
export type PreparedRevision = RevisionDetails & {
  value: string;
  valueNumeric: string;
  significantDigits: number;
  inputValue: string;
  inputUnit: string;
  method: Method;
  sourceId: number;
};

export type RevisionFieldErrors = Partial<Record<keyof RevisionInput | `potentialCoefficients.${number}`, string>>;

/**
 * Checks a typed revision against its quantity and converts it exactly to the canonical unit: value and
 * uncertainty (typed in the value's unit), the plausible range, potential coefficients with their period, and a
 * fit range. Shared by the forms (field messages) and the services (which refuse what this refuses).
 */
export function prepareRevision(q: QuantityDefinition, raw: unknown): { ok: true; revision: PreparedRevision } | { ok: false; errors: RevisionFieldErrors } {
  const parsed = revisionInputSchema.safeParse(raw);
  if (!parsed.success) {
    const errors: RevisionFieldErrors = {};
    for (const issue of parsed.error.issues) {
      const key = issue.path.slice(0, issue.path[0] === "potentialCoefficients" ? 2 : 1).join(".") as keyof RevisionFieldErrors;
      errors[key] ??= issue.message;
    }
    return { ok: false, errors };
  }
  const input = parsed.data;
  const errors: RevisionFieldErrors = {};
  const unitText = input.unit;
  const converted = convertToCanonical(input.value, unitText, q.acceptedUnits);
  let value: PreparedRevision["value"] = "";
  let significantDigits = 0;
  if (!converted.ok) errors[converted.field] = converted.message;
  else {
    value = converted.value.canonical;
    significantDigits = converted.value.significantDigits;
    const range = checkRange(q, value);
    if (range) errors.value = range;
  }
  let uncertainty: string | null = null;
  if (input.uncertainty !== undefined) {
    const u = parseExactDecimal(input.uncertainty);
    const unit = findAcceptedUnit(q.acceptedUnits, unitText);
    if (!u.ok) errors.uncertainty = u.message;
    else if (u.value.decimal.isNegative()) errors.uncertainty = "An uncertainty is not negative.";
    else if (unit) uncertainty = (unit.factor === "1" ? u.value : scaleExact(u.value, unit.factor)).canonical;
  }
  let potentialCoefficients: PreparedRevision["potentialCoefficients"] = null;
  let periodAngstrom: string | null = null;
  const hosted = quantityByKey("potential_un");
  if (input.potentialCoefficients?.length) {
    if (!hosted || hosted.storedWith !== q.key) errors.potentialCoefficients = `Potential coefficients are stated with a band gap, not with ${q.name.toLowerCase()}.`;
    else {
      const seen = new Set<number>();
      potentialCoefficients = [];
      input.potentialCoefficients.forEach((c, i) => {
        const v = parseExactDecimal(c.value);
        if (seen.has(c.n)) errors[`potentialCoefficients.${i}`] = `U_${c.n} is stated twice.`;
        else if (!v.ok) errors[`potentialCoefficients.${i}`] = v.message;
        else {
          const range = checkRange(hosted, v.value.canonical);
          if (range) errors[`potentialCoefficients.${i}`] = range;
          else potentialCoefficients!.push({ n: c.n, valueEv: v.value.canonical });
        }
        seen.add(c.n);
      });
      potentialCoefficients.sort((a, b) => a.n - b.n);
      if (input.periodAngstrom === undefined) errors.periodAngstrom = "State the period a (Å) the coefficients belong to.";
    }
  }
  if (input.periodAngstrom !== undefined) {
    const p = parseExactDecimal(input.periodAngstrom);
    if (!input.potentialCoefficients?.length) errors.periodAngstrom = "A period is stated only with potential coefficients.";
    else if (!p.ok) errors.periodAngstrom = p.message;
    else if (p.value.decimal.lte(0) || p.value.decimal.gt(100)) errors.periodAngstrom = "The period must lie between 0 and 100 Å.";
    else if (p.value.decimal.lt(SMALLEST_PERIOD_ANGSTROM)) {
      errors.periodAngstrom = `A period below ${SMALLEST_PERIOD_ANGSTROM} Å puts the gap at energies too large for double precision to resolve (is it in Å?).`;
    }
    else periodAngstrom = p.value.canonical;
  }
  let validFromK: string | null = null;
  let validToK: string | null = null;
  for (const field of ["validFromK", "validToK"] as const) {
    const text = input[field];
    if (text === undefined) continue;
    if (!q.fitRange) {
      errors[field] = `${q.name} has no fit range.`;
      continue;
    }
    const t = parseExactDecimal(text);
    if (!t.ok) errors[field] = t.message;
    else if (t.value.decimal.isNegative() || t.value.decimal.gt(5000)) errors[field] = "A fit range lies between 0 and 5000 K.";
    else if (field === "validFromK") validFromK = t.value.canonical;
    else validToK = t.value.canonical;
  }
  if (validFromK !== null && validToK !== null && compareStrings(validFromK, validToK) > 0) {
    errors.validToK = "The fit range ends below where it starts.";
  }
  if (Object.keys(errors).length || !converted.ok) return { ok: false, errors };
  return {
    ok: true,
    revision: {
      value,
      valueNumeric: decimalColumnValue(value),
      significantDigits,
      inputValue: converted.inputValue,
      inputUnit: converted.inputUnit,
      uncertainty,
      method: input.method,
      sourceId: input.sourceId,
      locator: input.locator ?? null,
      notes: input.notes ?? null,
      potentialCoefficients,
      periodAngstrom,
      validFromK,
      validToK,
    },
  };
}

function compareStrings(a: string, b: string): number {
  const x = parseExactDecimal(a);
  const y = parseExactDecimal(b);
  if (!x.ok || !y.ok) return 0;
  return x.value.decimal.comparedTo(y.value.decimal);
}

/** A source as entered: a DOI (format checked, no look-up), a pasted BibTeX entry (parsed on the server), or an internal report. */
export const sourceInputSchema = z.discriminatedUnion("kind", [
  z.object({
    kind: z.literal("doi"),
    doi: z.string().transform((s, ctx) => {
      const r = parseDoi(s);
      if (!r.ok) {
        ctx.addIssue({ code: "custom", message: r.message });
        return z.NEVER;
      }
      return r.doi;
    }),
    title: z.string().trim().min(1, "Enter the title.").max(500, atMost(500)),
    authors: optionalText(500),
    year: z.preprocess(blankToUndefined, z.coerce.number().int().min(1800).max(2100).optional()),
  }),
  z.object({
    kind: z.literal("bibtex"),
    bibtex: z.string().trim().min(1, "Paste a BibTeX entry.").max(20_000, atMost(20_000)),
  }),
  z.object({
    kind: z.literal("report"),
    reportNumber: z.string().transform((s, ctx) => {
      const r = parseReportNumber(s);
      if (!r.ok) {
        ctx.addIssue({ code: "custom", message: r.message });
        return z.NEVER;
      }
      return r.reportNumber;
    }),
    title: z.string().trim().min(1, "Enter the title.").max(500, atMost(500)),
    authors: optionalText(500),
    year: z.preprocess(blankToUndefined, z.coerce.number().int().min(1800).max(2100).optional()),
  }),
]);
export type SourceInput = z.infer<typeof sourceInputSchema>;

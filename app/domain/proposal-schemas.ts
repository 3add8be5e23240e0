import { z } from "zod";
import { parseDoi } from "./citations";
import { normalisedDecimalKey, parseExactDecimal } from "./exact-decimal";
import { conditionKey, describeTemperature, quantityByKey, validateConditions, VALLEY_LABELS, type Conditions, type QuantityDefinition, type Valley } from "./quantities";
import {
  METHOD_KEYS, prepareRevision, sourceInputSchema, type Method, type PreparedRevision, type RevisionInput, type SourceInput,
} from "./registry-schemas";

export const PROPOSAL_KIND_KEYS = ["new_record", "revision", "retirement"] as const;
export type ProposalKind = (typeof PROPOSAL_KIND_KEYS)[number];
export const PROPOSAL_KIND_LABELS: Record<ProposalKind, string> = {
  new_record: "new record",
  revision: "new value for a record",
  retirement: "retirement of a record",
};

export const PROPOSAL_STATE_KEYS = ["draft", "submitted", "approved", "rejected", "withdrawn"] as const;
export type ProposalState = (typeof PROPOSAL_STATE_KEYS)[number];

export const SOURCE_KIND_KEYS = ["doi", "bibtex", "report"] as const;
export type SourceKind = (typeof SOURCE_KIND_KEYS)[number];
export const SOURCE_KIND_LABELS: Record<SourceKind, string> = { doi: "DOI", bibtex: "BibTeX entry", report: "internal report" };

export const TEMPERATURE_MODES = ["stated", "fit0"] as const;

/** A material as the proposal form and the CSV check know it. */
export type CatalogueMaterial = {
  id: number;
  key: string;
  name: string;
  formula: string;
  kind: "element" | "binary" | "alloy";
  familyId: number;
  familyName: string;
};

/** What a proposal is checked against: the materials and the quantity definitions as they stand in the database. */
export type ProposalCatalogue = { materials: readonly CatalogueMaterial[]; quantities: readonly QuantityDefinition[] };

// Drafts keep whatever was typed; only these generous caps apply so one field cannot fill the row.
const DRAFT_FIELD_CAP = 20_000;
const kept = z.unknown().optional().transform((v) => (typeof v === "string" ? v.slice(0, DRAFT_FIELD_CAP) : typeof v === "number" ? String(v) : ""));

/**
 * A proposal as typed: every field a string, exactly as the form, a CSV row or a draft holds it. This is the
 * shape of proposals.payload and of the form's client-side state (a live check can read it as it is).
 */
export const proposalPayloadSchema = z.object({
  kind: z.enum(PROPOSAL_KIND_KEYS).catch("new_record"),
  recordId: kept,
  material: kept,
  quantity: kept,
  temperatureMode: z.enum(TEMPERATURE_MODES).catch("stated"),
  temperatureK: kept,
  valley: kept,
  composition: kept,
  value: kept,
  unit: kept,
  uncertainty: kept,
  method: kept,
  source: z
    .object({
      kind: z.enum(SOURCE_KIND_KEYS).catch("doi"),
      doi: kept,
      bibtex: kept,
      reportNumber: kept,
      title: kept,
      authors: kept,
      year: kept,
    })
    .catch({ kind: "doi", doi: "", bibtex: "", reportNumber: "", title: "", authors: "", year: "" }),
  locator: kept,
  notes: kept,
  potentialCoefficients: z.array(z.object({ n: kept, valueEv: kept }).catch({ n: "", valueEv: "" })).max(50).catch([]),
  periodAngstrom: kept,
  validFromK: kept,
  validToK: kept,
  reason: kept,
});
export type ProposalPayload = z.output<typeof proposalPayloadSchema>;

/** Any stored or posted object read into the payload shape; nothing typed within the caps is dropped. */
export function readProposalPayload(raw: unknown): ProposalPayload {
  return proposalPayloadSchema.parse(raw && typeof raw === "object" ? raw : {});
}

export function emptyPayload(kind: ProposalKind = "new_record"): ProposalPayload {
  return readProposalPayload({ kind });
}

const SCALAR_FIELDS = [
  "kind", "recordId", "material", "quantity", "temperatureMode", "temperatureK", "valley", "composition", "value", "unit",
  "uncertainty", "method", "locator", "notes", "periodAngstrom", "validFromK", "validToK", "reason",
] as const;
const SOURCE_FIELDS = ["kind", "doi", "bibtex", "reportNumber", "title", "authors", "year"] as const;

/** Reads a posted form whose field names are the payload paths ("source.doi", "potentialCoefficients.0.n"). */
export function payloadFromFormData(form: FormData): ProposalPayload {
  const get = (name: string) => {
    const v = form.get(name);
    return typeof v === "string" ? v : undefined;
  };
  const raw: Record<string, unknown> = {};
  for (const f of SCALAR_FIELDS) raw[f] = get(f);
  raw.source = Object.fromEntries(SOURCE_FIELDS.map((f) => [f, get(`source.${f}`)]));
  const rows: { n?: string; valueEv?: string }[] = [];
  for (const [name, value] of form.entries()) {
    const m = /^potentialCoefficients\.(\d{1,2})\.(n|valueEv)$/.exec(name);
    if (!m || typeof value !== "string") continue;
    const i = Number(m[1]);
    rows[i] ??= {};
    rows[i][m[2] as "n" | "valueEv"] = value;
  }
  raw.potentialCoefficients = rows.filter(Boolean);
  return readProposalPayload(raw);
}

/** The same payload as form fields, for a fetcher that posts the client-side state. */
export function payloadToFormData(p: ProposalPayload, form = new FormData()): FormData {
  for (const f of SCALAR_FIELDS) form.set(f, p[f]);
  for (const f of SOURCE_FIELDS) form.set(`source.${f}`, p.source[f]);
  p.potentialCoefficients.forEach((c, i) => {
    form.set(`potentialCoefficients.${i}.n`, c.n);
    form.set(`potentialCoefficients.${i}.valueEv`, c.valueEv);
  });
  return form;
}

/** Field messages keyed by the payload path of the field that is wrong ("value", "source.doi", "potentialCoefficients.1"). */
export type ProposalFieldErrors = Record<string, string>;

/** A proposal that passed every check the browser can make; the server adds what needs the database. */
export type ValidProposal = {
  kind: ProposalKind;
  recordId: number | null;
  material: CatalogueMaterial;
  quantity: QuantityDefinition;
  /** New records only: the conditions and their normalised key. */
  conditions: Conditions | null;
  conditionKey: string | null;
  /** Value proposals: the value converted exactly to the canonical unit (its source gets an id only at approval). */
  prepared: Omit<PreparedRevision, "sourceId"> | null;
  source: SourceInput | null;
  locator: string | null;
  reason: string | null;
};

const blank = (s: string) => s.trim() === "";

/** The material a person typed or chose: by key, else by formula or name (any case). */
export function materialOf(catalogue: ProposalCatalogue, typed: string): CatalogueMaterial | undefined {
  const t = typed.trim().toLowerCase();
  return catalogue.materials.find((m) => m.key.toLowerCase() === t)
    ?? catalogue.materials.find((m) => m.formula.toLowerCase() === t || m.name.toLowerCase() === t);
}

/** The quantity a person typed or chose: by key, else by name (any case). */
export function quantityOf(catalogue: ProposalCatalogue, typed: string): QuantityDefinition | undefined {
  const t = typed.trim().toLowerCase();
  return catalogue.quantities.find((q) => q.key.toLowerCase() === t) ?? catalogue.quantities.find((q) => q.name.toLowerCase() === t);
}

/** The source as the registry's source schema reads it, or null when nothing identifying was typed. */
function sourceCandidate(p: ProposalPayload): Record<string, string> | null {
  const s = p.source;
  if (s.kind === "bibtex") return blank(s.bibtex) ? null : { kind: "bibtex", bibtex: s.bibtex };
  const id = s.kind === "doi" ? s.doi : s.reportNumber;
  if (blank(id) && blank(s.title)) return null;
  return s.kind === "doi"
    ? { kind: "doi", doi: s.doi, title: s.title, authors: s.authors, year: s.year }
    : { kind: "report", reportNumber: s.reportNumber, title: s.title, authors: s.authors, year: s.year };
}

/** The revision as the registry's append service takes it (units converted there, exactly as checked here). */
export function revisionInputOf(p: ProposalPayload, sourceId: number): RevisionInput {
  const coefficients = p.potentialCoefficients.filter((c) => !blank(c.n) || !blank(c.valueEv));
  return {
    value: p.value,
    unit: p.unit,
    uncertainty: p.uncertainty,
    method: p.method as Method,
    sourceId,
    locator: p.locator,
    notes: p.notes,
    potentialCoefficients: coefficients.length ? coefficients.map((c) => ({ n: c.n.trim() as unknown as number, value: c.valueEv })) : undefined,
    periodAngstrom: p.periodAngstrom,
    validFromK: p.validFromK,
    validToK: p.validToK,
  };
}

const REVISION_FIELD_PATHS: Record<string, string> = { sourceId: "source.kind" };

/**
 * The one schema of a proposal, shared by the browser (messages as the person types) and the server (which
 * refuses what this refuses). Built over the catalogue it checks materials, quantities and units against.
 */
export function proposalSchema(catalogue: ProposalCatalogue) {
  return proposalPayloadSchema.transform((p, ctx): ValidProposal => {
    const errors: ProposalFieldErrors = {};
    const fail = (path: string, message: string) => {
      errors[path] ??= message;
    };
    let recordId: number | null = null;
    if (p.kind !== "new_record") {
      if (!/^\d{1,10}$/.test(p.recordId.trim())) fail("recordId", "Choose the record this proposal changes.");
      else recordId = Number(p.recordId.trim());
    }
    const material = blank(p.material) ? undefined : materialOf(catalogue, p.material);
    if (!material) fail("material", blank(p.material) ? "Choose the material." : `“${p.material.trim()}” is not a material in the ledger.`);
    const quantity = blank(p.quantity) ? undefined : quantityOf(catalogue, p.quantity);
    if (!quantity) fail("quantity", blank(p.quantity) ? "Choose the quantity." : `“${p.quantity.trim()}” is not a quantity in the catalogue.`);
    if (quantity?.storedWith) fail("quantity", `${quantity.name} is stated with a band-gap proposal (as potential coefficients), not on its own.`);

    let conditions: Conditions | null = null;
    let key: string | null = null;
    if (p.kind === "new_record" && material && quantity && !quantity.storedWith) {
      const wantsTemperature = quantity.temperature === "stated" || (quantity.temperature === "fit-or-stated" && p.temperatureMode === "stated");
      if (wantsTemperature && blank(p.temperatureK)) {
        fail("temperatureK", quantity.temperature === "stated" ? `${quantity.name} is stated at a temperature: enter it in K.` : "Enter the temperature in K, or choose “0 K fit parameter”.");
      }
      const checked = validateConditions(quantity, material.kind, {
        temperatureK: wantsTemperature || (p.temperatureMode === "stated" && !blank(p.temperatureK)) ? p.temperatureK : null,
        valley: p.valley,
        composition: p.composition,
      });
      if (!checked.ok) for (const [field, message] of Object.entries(checked.errors)) fail(field, message!);
      else {
        conditions = checked.conditions;
        key = conditionKey(quantity, conditions);
      }
    }

    let prepared: ValidProposal["prepared"] = null;
    let source: SourceInput | null = null;
    let reason: string | null = null;
    const candidate = sourceCandidate(p);
    if (p.kind === "retirement") {
      if (blank(p.reason)) fail("reason", "State why the record should be retired.");
      else if (p.reason.trim().length > 4000) fail("reason", "At most 4000 characters.");
      else reason = p.reason.trim();
    } else {
      if (!candidate) fail(p.source.kind === "bibtex" ? "source.bibtex" : p.source.kind === "doi" ? "source.doi" : "source.reportNumber", "A value needs its source: a DOI, a BibTeX entry or an internal report number.");
      if (blank(p.locator)) fail("locator", "Say where in the source the value stands: page, table or figure.");
      if (quantity && !quantity.storedWith) {
        const result = prepareRevision(quantity, revisionInputOf(p, 1));
        if (!result.ok) {
          for (const [field, message] of Object.entries(result.errors)) fail(REVISION_FIELD_PATHS[field] ?? field, message!);
        } else {
          const { sourceId: _unused, ...rest } = result.revision;
          prepared = rest;
        }
      }
    }
    if (candidate) {
      const parsed = sourceInputSchema.safeParse(candidate);
      if (!parsed.success) for (const issue of parsed.error.issues) fail(`source.${String(issue.path[0] ?? "kind")}`, issue.message);
      else {
        source = parsed.data;
        if (source.kind === "bibtex" && !source.bibtex.startsWith("@")) fail("source.bibtex", "A BibTeX entry starts with @, e.g. @article{key, …}.");
      }
    }
    if (p.kind !== "retirement" && blank(p.method) && !errors.method) fail("method", "Choose how the value was obtained.");
    if (!blank(p.method) && !(METHOD_KEYS as readonly string[]).includes(p.method)) fail("method", "Choose how the value was obtained.");

    if (Object.keys(errors).length || !material || !quantity) {
      for (const [path, message] of Object.entries(errors)) ctx.addIssue({ code: "custom", path: path.split("."), message });
      return z.NEVER;
    }
    return {
      kind: p.kind,
      recordId,
      material,
      quantity,
      conditions,
      conditionKey: key,
      prepared,
      source,
      locator: blank(p.locator) ? null : p.locator.trim(),
      reason,
    };
  });
}

export type ProposalCheck = { ok: true; proposal: ValidProposal; payload: ProposalPayload } | { ok: false; errors: ProposalFieldErrors; payload: ProposalPayload };

/** Checks a payload and returns either the valid proposal or one message per field that is wrong. */
export function validateProposal(raw: unknown, catalogue: ProposalCatalogue): ProposalCheck {
  const payload = readProposalPayload(raw);
  const result = proposalSchema(catalogue).safeParse(payload);
  if (result.success) return { ok: true, proposal: result.data, payload };
  return { ok: false, errors: fieldErrorsOf(result.error), payload };
}

export function fieldErrorsOf(error: z.ZodError): ProposalFieldErrors {
  const errors: ProposalFieldErrors = {};
  for (const issue of error.issues) errors[issue.path.join(".") || "form"] ??= issue.message;
  return errors;
}

/** A remark on a proposal. */
export const commentSchema = z.object({
  body: z.string().trim().min(1, "Write a remark first.").max(4000, "A remark has at most 4000 characters."),
});

/** A lead's decision: a rejection always says why. */
export const decisionSchema = z.discriminatedUnion("decision", [
  z.object({ decision: z.literal("approve"), version: z.coerce.number().int().positive(), reason: z.string().trim().max(4000, "At most 4000 characters.").optional() }),
  z.object({
    decision: z.literal("reject"),
    version: z.coerce.number().int().positive(),
    reason: z.string().trim().min(1, "Say why the proposal is rejected; the author reads it.").max(4000, "At most 4000 characters."),
  }),
]);

/** Whether what was typed as a source looks like a DOI (the CSV's one source column takes a DOI, a report number or BibTeX). */
export function guessSourceKind(text: string): SourceKind {
  const t = text.trim();
  if (t.startsWith("@")) return "bibtex";
  if (parseDoi(t).ok && /^(?:doi:|https?:|10\.)/i.test(t)) return "doi";
  return "report";
}

/** A row of the review queue. */
export type ReviewQueueRow = {
  id: number;
  kind: ProposalKind;
  submittedAt: string;
  material: string;
  familyName: string;
  quantity: string;
  conditions: string;
  current: string;
  proposed: string;
  author: string;
  own: boolean;
  stale: boolean;
  checkStatus: string | null;
};

// A draft may hold a condition that is not a number yet: it is shown as typed.
const plainNumber = (s: string) => (parseExactDecimal(s).ok ? normalisedDecimalKey(s.trim()) : s.trim());

/** "Γ, 300 K", "X, 0 K fit", "x = 0.3, Γ, 300 K", "T-independent". */
export function conditionsLabel(quantityKey: string, c: { temperatureK: string | null; valley: Valley | null; composition: string | null }): string {
  const q = quantityByKey(quantityKey);
  const parts = [
    c.composition !== null ? `x = ${plainNumber(c.composition)}` : null,
    c.valley ? VALLEY_LABELS[c.valley] ?? c.valley : null,
    c.temperatureK !== null ? `${plainNumber(c.temperatureK)} K` : describeTemperature(q, null),
  ];
  return parts.filter(Boolean).join(", ");
}

import { eq } from "drizzle-orm";
import {
  evaluateRelease, evaluationFileName, evaluationText, parseEvaluationQuery, releaseMaterials, releaseSubstrates, type Evaluation, type EvaluationField,
  type EvaluationFormat, type EvaluationQuery,
} from "~/domain/derived";
import { parseReleaseJson, type ReleaseContent } from "~/domain/release-format";
import { db } from "../db/client";
import { materials } from "../db/schema";
import { SetError } from "./errors";
import { requireRelease, requireSet } from "./queries";
import { SOFTWARE_VERSION } from "./service";

const PARAMETERS = ["temperature", "material", "x", "substrate", "missingBowing", "format"] as const;

export type EvaluationRequest = { query: EvaluationQuery; format: EvaluationFormat };

/** The conditions of an evaluation from a query string; every wrong field with its message (the page shows them all). */
export function readEvaluationParams(params: URLSearchParams): { ok: true; request: EvaluationRequest } | { ok: false; errors: Partial<Record<EvaluationField | "format" | "query", string>> } {
  const unknown = [...params.keys()].find((k) => !(PARAMETERS as readonly string[]).includes(k));
  if (unknown !== undefined) return { ok: false, errors: { query: `${unknown.slice(0, 40)}: not a parameter of an evaluation (${PARAMETERS.join(", ")}).` } };
  const format = params.get("format") ?? "json";
  const parsed = parseEvaluationQuery(Object.fromEntries(PARAMETERS.filter((k) => k !== "format").map((k) => [k, params.get(k)])));
  const errors: Partial<Record<EvaluationField | "format" | "query", string>> = parsed.ok ? {} : { ...parsed.errors };
  if (format !== "json" && format !== "csv") errors.format = `format: json or csv (got "${format.slice(0, 20)}").`;
  if (!parsed.ok || errors.format) return { ok: false, errors };
  return { ok: true, request: { query: parsed.query, format: format as EvaluationFormat } };
}

// Frozen releases never change, so their parsed content can be kept once read (a few, least recently used out).
const contents = new Map<string, { content: ReleaseContent; sha256: string }>();
const MAX_CONTENTS = 16;

async function releaseContent(slug: string, number: number): Promise<{ content: ReleaseContent; sha256: string }> {
  const key = `${slug}\u0000${number}`;
  const hit = contents.get(key);
  if (hit) {
    contents.delete(key);
    contents.set(key, hit);
    return hit;
  }
  const set = await requireSet(slug);
  const stored = await requireRelease(set, number);
  const parsed = parseReleaseJson(stored.canonicalJson);
  const entry = { content: parsed.content, sha256: stored.sha256 };
  contents.set(key, entry);
  while (contents.size > MAX_CONTENTS) contents.delete(contents.keys().next().value!);
  return entry;
}

async function inRegistry(key: string): Promise<boolean> {
  const [row] = await db().select({ id: materials.id }).from(materials).where(eq(materials.key, key)).limit(1);
  return row !== undefined;
}

/**
 * A frozen release evaluated at the asked conditions, by the same domain code the command line runs offline. A
 * material the registry does not know, or one the release does not hold, is refused with the field named.
 */
export async function evaluateStoredRelease(slug: string, number: number, query: EvaluationQuery): Promise<Evaluation> {
  const { content, sha256 } = await releaseContent(slug, number);
  for (const field of ["material", "substrate"] as const) {
    const key = query[field];
    if (key !== null && !content.items.some((i) => i.material.key === key) && !(await inRegistry(key))) {
      throw new SetError("invalid_request", `${field}: no material ${key} in the registry; /api/v1/materials lists them.`, field);
    }
  }
  const result = evaluateRelease(content, sha256, query, SOFTWARE_VERSION);
  if (!result.ok) throw new SetError("invalid_request", result.message, result.field);
  return result.evaluation;
}

/** The evaluation as the API serves it: the exact bytes the command line writes, JSON or CSV. */
export function evaluationResponse(evaluation: Evaluation, format: EvaluationFormat): Response {
  const headers = new Headers({
    "Cache-Control": "no-store",
    "X-Bandledger-Release-Sha256": evaluation.release.sha256,
    "X-Content-Type-Options": "nosniff",
    "Content-Type": format === "json" ? "application/json; charset=utf-8" : "text/csv; charset=utf-8; header=present",
  });
  if (format === "csv") headers.set("Content-Disposition", `attachment; filename="${evaluationFileName(evaluation, "csv")}"`);
  return new Response(evaluationText(evaluation, format), { status: 200, headers });
}

export type ReleaseEvaluationForm = {
  /** As typed, so the form shows what was asked for. */
  values: { temperature: string; material: string; x: string; substrate: string; missingBowing: string };
  errors: Partial<Record<EvaluationField | "format" | "query", string>>;
};

export type ReleaseEvaluationPage = {
  form: ReleaseEvaluationForm;
  options: { materials: { key: string; name: string; alloy: boolean }[]; substrates: { key: string; name: string }[] };
  evaluation: Evaluation | null;
  /** The query of the evaluation shown, for its downloads. */
  query: string | null;
};

/** The release page's "Evaluate at…": nothing until a temperature is asked for, then the evaluation or the fields at fault. */
export async function loadReleaseEvaluation(slug: string, number: number, params: URLSearchParams): Promise<ReleaseEvaluationPage> {
  const { content } = await releaseContent(slug, number);
  const materials = releaseMaterials(content);
  const options = {
    materials: [...materials.values()].map((m) => ({ key: m.material.key, name: m.material.name, alloy: m.material.kind === "alloy" })),
    substrates: releaseSubstrates(materials).map((m) => ({ key: m.material.key, name: m.material.name })),
  };
  const text = (k: string) => (params.get(k) ?? "").slice(0, 40);
  const form: ReleaseEvaluationForm = {
    values: { temperature: text("temperature"), material: text("material"), x: text("x"), substrate: text("substrate"), missingBowing: text("missingBowing") },
    errors: {},
  };
  if (!params.has("temperature")) return { form, options, evaluation: null, query: null };
  // Empty fields of the GET form mean "not asked".
  const asked = new URLSearchParams([...params].filter(([k, v]) => v.trim() !== "" && k !== "format"));
  if (!asked.has("temperature")) asked.set("temperature", "");
  const read = readEvaluationParams(asked);
  if (!read.ok) return { form: { ...form, errors: read.errors }, options, evaluation: null, query: null };
  try {
    const evaluation = await evaluateStoredRelease(slug, number, read.request.query);
    return { form, options, evaluation, query: asked.toString() };
  } catch (e) {
    if (e instanceof SetError && e.code === "invalid_request" && e.field) return { form: { ...form, errors: { [e.field]: e.message } }, options, evaluation: null, query: null };
    throw e;
  }
}

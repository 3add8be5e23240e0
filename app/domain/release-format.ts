import Papa from "papaparse";
import { z } from "zod";

/** The name and version of the release document; docs/release-format.md describes every field. */
export const RELEASE_SCHEMA = "bandledger.release";
export const RELEASE_SCHEMA_VERSION = 1;

// Plain decimal strings as stored: optional minus, digits, optional fraction; never an exponent or a float.
const DECIMAL = /^-?\d+(?:\.\d+)?$/;
const decimalString = z.string().regex(DECIMAL, "a plain decimal string");
const text = z.string().min(1);
const nullableText = text.nullable();
const sha256Field = z.string().regex(/^[0-9a-f]{64}$/);
const isoInstant = z.string().regex(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/, "an ISO 8601 UTC instant with milliseconds");
const id = z.number().int().positive();

export const releaseSourceSchema = z.strictObject({
  kind: z.enum(["doi", "bibtex", "report"]),
  doi: nullableText,
  bibtexKey: nullableText,
  reportNumber: nullableText,
  title: text,
  authors: nullableText,
  year: z.number().int().nullable(),
});

export const releaseItemSchema = z.strictObject({
  recordId: id,
  revisionId: id,
  revisionSeq: id,
  material: z.strictObject({ key: text, name: text, formula: text }),
  quantity: z.strictObject({ key: text, symbol: text, name: text }),
  value: decimalString,
  unit: text,
  uncertainty: decimalString.nullable(),
  temperatureK: decimalString.nullable(),
  temperatureKind: z.enum(["stated", "fit0", "independent"]),
  valley: z.enum(["G", "X", "L"]).nullable(),
  composition: decimalString.nullable(),
  validFromK: decimalString.nullable(),
  validToK: decimalString.nullable(),
  method: z.enum(["measured", "calculated", "fitted", "compilation"]).nullable(),
  source: releaseSourceSchema.nullable(),
  locator: nullableText,
  notes: nullableText,
  approvedAt: isoInstant.nullable(),
});

export const releaseContentSchema = z.strictObject({
  schema: z.literal(RELEASE_SCHEMA),
  schemaVersion: z.literal(RELEASE_SCHEMA_VERSION),
  set: z.strictObject({ slug: text, name: text, purpose: text, description: nullableText }),
  release: z.strictObject({
    number: id,
    frozenAt: isoInstant,
    frozenBy: text,
    codataEdition: text,
    softwareVersion: text,
    itemCount: z.number().int().min(0),
  }),
  items: z.array(releaseItemSchema),
});

export type ReleaseSource = z.infer<typeof releaseSourceSchema>;
export type ReleaseItem = z.infer<typeof releaseItemSchema>;
export type ReleaseContent = z.infer<typeof releaseContentSchema>;
export type ReleaseFormat = "json" | "csv";

type Json = null | boolean | number | string | Json[] | { [key: string]: Json };

/**
 * A deep copy with object keys in code-unit order. Only JSON values are allowed and numbers must be safe integers:
 * every measured number travels as a decimal string, so no binary float can change a digit.
 */
export function sortedForCanonicalJson(value: unknown, path = "$"): Json {
  if (value === null || typeof value === "boolean" || typeof value === "string") return value;
  if (typeof value === "number") {
    if (!Number.isSafeInteger(value)) throw new TypeError(`${path}: only whole numbers may be JSON numbers (got ${value}); write decimals as strings`);
    return value;
  }
  if (Array.isArray(value)) return value.map((v, i) => sortedForCanonicalJson(v, `${path}[${i}]`));
  if (typeof value === "object" && Object.getPrototypeOf(value) === Object.prototype) {
    const out: { [key: string]: Json } = {};
    for (const key of Object.keys(value).sort()) {
      const v = (value as Record<string, unknown>)[key];
      if (v === undefined) throw new TypeError(`${path}.${key} is undefined; use null`);
      out[key] = sortedForCanonicalJson(v, `${path}.${key}`);
    }
    return out;
  }
  throw new TypeError(`${path}: ${typeof value} is not a JSON value`);
}

/** The compact canonical form: sorted keys, no whitespace, JSON.stringify's escapes. The release hash covers these bytes. */
export function canonicalJson(value: unknown): string {
  return JSON.stringify(sortedForCanonicalJson(value));
}

/** SHA-256 of the UTF-8 bytes of a string (or of raw bytes), lower-case hex; Web Crypto, so Node and browsers agree. */
export async function sha256Hex(input: string | Uint8Array): Promise<string> {
  const bytes = typeof input === "string" ? new TextEncoder().encode(input) : input;
  const digest = await globalThis.crypto.subtle.digest("SHA-256", bytes as Uint8Array<ArrayBuffer>);
  return Array.from(new Uint8Array(digest), (b) => b.toString(16).padStart(2, "0")).join("");
}

/** The release's content hash: SHA-256 over the compact canonical JSON of `content`. */
export async function releaseContentHash(content: ReleaseContent): Promise<string> {
  return sha256Hex(canonicalJson(content));
}

/** The downloadable JSON file: `{content, sha256}` with sorted keys, two-space indentation and a final newline. */
export function releaseJsonText(content: ReleaseContent, sha256: string): string {
  return `${JSON.stringify(sortedForCanonicalJson({ content, sha256 }), null, 2)}\n`;
}

export type SerialisedRelease = { sha256: string; json: string; csv: string; csvSha256: string };

/** Checks the content against the schema, then writes both forms and their hashes. */
export async function serialiseRelease(content: ReleaseContent): Promise<SerialisedRelease> {
  const checked = releaseContentSchema.parse(content);
  if (checked.release.itemCount !== checked.items.length) throw new RangeError("itemCount differs from the number of items");
  const sha256 = await releaseContentHash(checked);
  const json = releaseJsonText(checked, sha256);
  const csv = releaseCsvText(checked, sha256);
  return { sha256, json, csv, csvSha256: await sha256Hex(csv) };
}

export function releaseFileName(slug: string, number: number, format: ReleaseFormat): string {
  return `${slug}-r${number}.${format}`;
}

/** Columns of the CSV form, in order; each maps to one field of an item (docs/release-format.md). */
export const CSV_COLUMNS = [
  "record_id", "revision_id", "revision_seq",
  "material_key", "material_name", "material_formula",
  "quantity_key", "quantity_symbol", "quantity_name",
  "value", "unit", "uncertainty",
  "temperature_k", "temperature_kind", "valley", "composition", "valid_from_k", "valid_to_k",
  "method", "source_kind", "source_doi", "source_bibtex_key", "source_report_number", "source_title", "source_authors", "source_year",
  "locator", "notes", "approved_at",
] as const;

const PREAMBLE_KEYS = [
  "schema", "schema_version", "sha256",
  "set_slug", "set_name", "set_purpose", "set_description",
  "release_number", "release_frozen_at", "release_frozen_by", "release_codata_edition", "release_software_version", "release_item_count",
] as const;

const CSV_LINE_END = "\r\n";
const PLAIN_NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
// Characters that make a spreadsheet evaluate a cell (OWASP "CSV injection"), also after earlier apostrophes.
const FORMULA_START = /^'*[=+\-@\t\r]/;

/**
 * A text cell that a spreadsheet would run as a formula gets a leading apostrophe, which spreadsheets show as
 * text; numbers such as "-1.94" stay as they are. Cells already starting with apostrophes before such a character
 * get one more, so `unguardCsvCell` restores every value exactly.
 */
export function guardCsvCell(value: string): string {
  if (!FORMULA_START.test(value)) return value;
  if (/^[=+\-@]/.test(value) && PLAIN_NUMBER.test(value)) return value;
  return `'${value}`;
}

export function unguardCsvCell(cell: string): string {
  return /^'+[=+\-@\t\r]/.test(cell) ? cell.slice(1) : cell;
}

/** One CSV cell: null is empty, text is formula-guarded, then quoted (RFC 4180) when it holds a separator, quote or line break. */
export function csvCell(value: string | number | null): string {
  if (value === null) return "";
  const s = guardCsvCell(String(value));
  return /[",;\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

// Preamble values are JSON on one line, with "," and ";" escaped so that a spreadsheet keeps each line in one cell.
function preambleValue(value: string | number | null): string {
  return JSON.stringify(value).replace(/,/g, "\\u002c").replace(/;/g, "\\u003b");
}

function itemCells(item: ReleaseItem): (string | number | null)[] {
  const s = item.source;
  return [
    item.recordId, item.revisionId, item.revisionSeq,
    item.material.key, item.material.name, item.material.formula,
    item.quantity.key, item.quantity.symbol, item.quantity.name,
    item.value, item.unit, item.uncertainty,
    item.temperatureK, item.temperatureKind, item.valley, item.composition, item.validFromK, item.validToK,
    item.method, s?.kind ?? null, s?.doi ?? null, s?.bibtexKey ?? null, s?.reportNumber ?? null, s?.title ?? null, s?.authors ?? null, s?.year ?? null,
    item.locator, item.notes, item.approvedAt,
  ];
}

/**
 * The CSV form of a release: a preamble of `# key: value` lines with the set, the release and its content hash,
 * then one header row and one row per item, CRLF line ends. It holds the same fields as the JSON form, so the
 * content (and its hash) can be rebuilt from it.
 */
export function releaseCsvText(content: ReleaseContent, sha256: string): string {
  const { set, release } = content;
  const preamble: Record<(typeof PREAMBLE_KEYS)[number], string | number | null> = {
    schema: content.schema,
    schema_version: content.schemaVersion,
    sha256,
    set_slug: set.slug,
    set_name: set.name,
    set_purpose: set.purpose,
    set_description: set.description,
    release_number: release.number,
    release_frozen_at: release.frozenAt,
    release_frozen_by: release.frozenBy,
    release_codata_edition: release.codataEdition,
    release_software_version: release.softwareVersion,
    release_item_count: release.itemCount,
  };
  const lines = PREAMBLE_KEYS.map((key) => `# ${key}: ${preambleValue(preamble[key])}`);
  lines.push(CSV_COLUMNS.join(","));
  for (const item of content.items) lines.push(itemCells(item).map(csvCell).join(","));
  return lines.join(CSV_LINE_END) + CSV_LINE_END;
}

export type ParsedRelease = { content: ReleaseContent; sha256: string };

export class ReleaseFormatError extends Error {
  override name = "ReleaseFormatError";
}

function integerCell(cell: string, column: string): number {
  if (!/^\d+$/.test(cell)) throw new ReleaseFormatError(`column ${column} must hold a whole number (got "${cell}")`);
  return Number(cell);
}

/** Reads the CSV form back into the content and the hash it states; refuses anything that is not in the layout. */
export function parseReleaseCsv(csvText: string): ParsedRelease {
  const lines = csvText.split(CSV_LINE_END);
  const preamble: Record<string, unknown> = {};
  PREAMBLE_KEYS.forEach((key, i) => {
    const line = lines[i] ?? "";
    const prefix = `# ${key}: `;
    if (!line.startsWith(prefix)) throw new ReleaseFormatError(`line ${i + 1} should start with "${prefix}"`);
    try {
      preamble[key] = JSON.parse(line.slice(prefix.length));
    } catch {
      throw new ReleaseFormatError(`line ${i + 1}: the value of ${key} is not valid JSON`);
    }
  });
  const table = lines.slice(PREAMBLE_KEYS.length).join(CSV_LINE_END);
  const parsed = Papa.parse<string[]>(table, { header: false, newline: CSV_LINE_END, skipEmptyLines: false });
  if (parsed.errors.length) throw new ReleaseFormatError(`the table does not parse as CSV: ${parsed.errors[0].message}`);
  const rows = parsed.data;
  if (rows.length && rows[rows.length - 1].length === 1 && rows[rows.length - 1][0] === "") rows.pop();
  const [header, ...body] = rows;
  if (!header || header.join(",") !== CSV_COLUMNS.join(",")) throw new ReleaseFormatError("the header row does not list the release columns");
  const items = body.map((row, r): ReleaseItem => {
    if (row.length !== CSV_COLUMNS.length) throw new ReleaseFormatError(`row ${r + 1} has ${row.length} cells, not ${CSV_COLUMNS.length}`);
    const cell = Object.fromEntries(CSV_COLUMNS.map((c, i) => [c, row[i] === "" ? null : unguardCsvCell(row[i])])) as Record<(typeof CSV_COLUMNS)[number], string | null>;
    const need = (c: (typeof CSV_COLUMNS)[number]) => {
      const v = cell[c];
      if (v === null) throw new ReleaseFormatError(`row ${r + 1}: ${c} is empty`);
      return v;
    };
    return {
      recordId: integerCell(need("record_id"), "record_id"),
      revisionId: integerCell(need("revision_id"), "revision_id"),
      revisionSeq: integerCell(need("revision_seq"), "revision_seq"),
      material: { key: need("material_key"), name: need("material_name"), formula: need("material_formula") },
      quantity: { key: need("quantity_key"), symbol: need("quantity_symbol"), name: need("quantity_name") },
      value: need("value"),
      unit: need("unit"),
      uncertainty: cell.uncertainty,
      temperatureK: cell.temperature_k,
      temperatureKind: need("temperature_kind") as ReleaseItem["temperatureKind"],
      valley: cell.valley as ReleaseItem["valley"],
      composition: cell.composition,
      validFromK: cell.valid_from_k,
      validToK: cell.valid_to_k,
      method: cell.method as ReleaseItem["method"],
      source: cell.source_kind === null ? null : {
        kind: cell.source_kind as ReleaseSource["kind"],
        doi: cell.source_doi,
        bibtexKey: cell.source_bibtex_key,
        reportNumber: cell.source_report_number,
        title: need("source_title"),
        authors: cell.source_authors,
        year: cell.source_year === null ? null : integerCell(cell.source_year, "source_year"),
      },
      locator: cell.locator,
      notes: cell.notes,
      approvedAt: cell.approved_at,
    };
  });
  const content = {
    schema: preamble.schema,
    schemaVersion: preamble.schema_version,
    set: { slug: preamble.set_slug, name: preamble.set_name, purpose: preamble.set_purpose, description: preamble.set_description },
    release: {
      number: preamble.release_number,
      frozenAt: preamble.release_frozen_at,
      frozenBy: preamble.release_frozen_by,
      codataEdition: preamble.release_codata_edition,
      softwareVersion: preamble.release_software_version,
      itemCount: preamble.release_item_count,
    },
    items,
  };
  const checked = releaseContentSchema.safeParse(content);
  if (!checked.success) {
    const issue = checked.error.issues[0];
    throw new ReleaseFormatError(`${issue.path.join(".") || "content"}: ${issue.message}`);
  }
  if (typeof preamble.sha256 !== "string") throw new ReleaseFormatError("the preamble does not state the sha256");
  return { content: checked.data, sha256: preamble.sha256 };
}

/** Reads the JSON form: `{content, sha256}` and nothing else. */
export function parseReleaseJson(jsonText: string): ParsedRelease {
  let doc: unknown;
  try {
    doc = JSON.parse(jsonText);
  } catch {
    throw new ReleaseFormatError("the file is not valid JSON");
  }
  const checked = z.strictObject({ content: releaseContentSchema, sha256: sha256Field }).safeParse(doc);
  if (!checked.success) {
    const issue = checked.error.issues[0];
    throw new ReleaseFormatError(`${issue.path.join(".") || "document"}: ${issue.message}`);
  }
  return checked.data;
}

export type ReleaseVerification =
  | { ok: true; format: ReleaseFormat; sha256: string; content: ReleaseContent }
  | { ok: false; format: ReleaseFormat | null; reason: string; statedSha256: string | null; computedSha256: string | null };

/** Tells the two forms apart by their first character: "{" for JSON, "#" for the CSV preamble. */
export function detectReleaseFormat(fileText: string): ReleaseFormat | null {
  if (fileText.startsWith("{")) return "json";
  if (fileText.startsWith("# ")) return "csv";
  return null;
}

/**
 * Verifies a release file offline: rebuilds the content, recomputes its canonical hash, compares it with the hash
 * the file states, and checks that the file is exactly the canonical rendering of that content (so no byte was
 * added, dropped or changed anywhere).
 */
export async function verifyReleaseText(fileText: string): Promise<ReleaseVerification> {
  const format = detectReleaseFormat(fileText);
  if (!format) return { ok: false, format: null, reason: "the file is neither a Bandledger release JSON nor its CSV form", statedSha256: null, computedSha256: null };
  let parsed: ParsedRelease;
  try {
    parsed = format === "json" ? parseReleaseJson(fileText) : parseReleaseCsv(fileText);
  } catch (e) {
    return { ok: false, format, reason: e instanceof Error ? e.message : String(e), statedSha256: null, computedSha256: null };
  }
  const computed = await releaseContentHash(parsed.content);
  if (computed !== parsed.sha256) {
    return { ok: false, format, reason: "the content does not match the hash the file states", statedSha256: parsed.sha256, computedSha256: computed };
  }
  const canonical = format === "json" ? releaseJsonText(parsed.content, parsed.sha256) : releaseCsvText(parsed.content, parsed.sha256);
  if (canonical !== fileText) {
    return { ok: false, format, reason: "the file is not byte for byte the canonical form of its content", statedSha256: parsed.sha256, computedSha256: computed };
  }
  return { ok: true, format, sha256: computed, content: parsed.content };
}

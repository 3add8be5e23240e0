import Papa from "papaparse";
import { parseExactDecimal } from "./exact-decimal";
import {
  conditionsLabel, guessSourceKind, readProposalPayload, validateProposal, type ProposalCatalogue, type ProposalPayload, type ValidProposal,
} from "./proposal-schemas";

export const MAX_CSV_BYTES = 2 * 1024 * 1024;
export const MAX_CSV_ROWS = 2000;
const MAX_COEFFICIENTS = 9;

type ColumnDef = { key: string; header: string; aliases: string[]; required: boolean; help: string };

/** The columns a proposal CSV may have: the first header is the one the template writes. */
export const CSV_COLUMNS: readonly ColumnDef[] = [
  { key: "material", header: "material", aliases: ["material_key", "formula"], required: true, help: "material key or formula, e.g. GaAs" },
  { key: "quantity", header: "quantity", aliases: ["quantity_key", "parameter"], required: true, help: "quantity key, e.g. eg, lattice_a, me" },
  { key: "temperatureK", header: "temperature_k", aliases: ["temperature", "t_k", "t"], required: false, help: "temperature in K; empty or “fit” for a 0 K fit parameter" },
  { key: "valley", header: "valley", aliases: [], required: false, help: "G (Γ), X or L where the quantity has a valley" },
  { key: "composition", header: "composition_x", aliases: ["composition", "x"], required: false, help: "fraction x of the first end member, for alloys" },
  { key: "value", header: "value", aliases: [], required: true, help: "the value as stated, e.g. 1.4225 or −0.127" },
  { key: "unit", header: "unit", aliases: ["units"], required: true, help: "unit of value and uncertainty, e.g. eV, meV, Å, nm; empty or 1 for dimensionless" },
  { key: "uncertainty", header: "uncertainty", aliases: ["error"], required: false, help: "in the same unit as the value" },
  { key: "method", header: "method", aliases: [], required: true, help: "measured, calculated, fitted or compilation" },
  { key: "source", header: "source", aliases: ["doi", "reference", "citation"], required: true, help: "a DOI, an internal report number, or a BibTeX entry" },
  { key: "source.title", header: "source_title", aliases: ["title"], required: false, help: "title of the source (for a DOI or a report)" },
  { key: "source.authors", header: "source_authors", aliases: ["authors"], required: false, help: "authors of the source" },
  { key: "source.year", header: "source_year", aliases: ["year"], required: false, help: "year of the source" },
  { key: "locator", header: "locator", aliases: ["page", "where"], required: true, help: "page, table or figure in the source" },
  { key: "notes", header: "notes", aliases: ["note"], required: false, help: "free notes" },
  { key: "validFromK", header: "fit_from_k", aliases: ["valid_from_k"], required: false, help: "start of the fit range in K" },
  { key: "validToK", header: "fit_to_k", aliases: ["valid_to_k"], required: false, help: "end of the fit range in K" },
  { key: "periodAngstrom", header: "period_angstrom", aliases: ["period_a", "period"], required: false, help: "period a in Å of the potential coefficients" },
];
const COEFFICIENT_HEADER = /^u_?(\d{1,2})(?:_ev)?$/;

export type CsvIssue = { row: number | null; column: string | null; message: string };

export type CsvRow = {
  /** The row as a spreadsheet numbers it: the header is row 1. */
  row: number;
  payload: ProposalPayload;
  errors: CsvIssue[];
  proposal: ValidProposal | null;
};

export type CsvCheck = {
  ok: boolean;
  /** Problems with the file as a whole; when there are any, no row is taken. */
  fileErrors: string[];
  rows: CsvRow[];
  delimiter: string;
  hadByteOrderMark: boolean;
  errorCount: number;
};

const FORMULA_START = /^[=+\-@\t\r\uFF1D\uFF0B\uFF0D\uFF20]/;

/**
 * Whether a spreadsheet would run the cell as a formula: text starting with = + - @ (or a tab, a carriage
 * return, or their full-width forms; OWASP CSV injection guidance) that is not a number. −0.127 and -0.127 are
 * values; =HYPERLINK(…) and @SUM(…) are not.
 */
export function isFormulaCell(cell: string): boolean {
  return FORMULA_START.test(cell) && !parseExactDecimal(cell).ok;
}

/** A cell for a CSV we write: anything a spreadsheet would run is written as text, with a leading apostrophe. */
export function csvSafeCell(value: string): string {
  return isFormulaCell(value) ? `'${value}` : value;
}

export function toCsv(rows: string[][]): string {
  return Papa.unparse(rows.map((r) => r.map(csvSafeCell)), { newline: "\r\n", quotes: false, escapeFormulae: false }) + "\r\n";
}

function firstInvalidUtf8(bytes: Uint8Array): number {
  let i = 0;
  while (i < bytes.length) {
    const b = bytes[i];
    let need = 0;
    let min = 0;
    if (b < 0x80) {
      i++;
      continue;
    } else if (b >= 0xc2 && b <= 0xdf) {
      need = 1;
      min = 0x80;
    } else if (b >= 0xe0 && b <= 0xef) {
      need = 2;
      min = 0x800;
    } else if (b >= 0xf0 && b <= 0xf4) {
      need = 3;
      min = 0x10000;
    } else return i;
    let cp = b & (0xff >> (need + 2));
    for (let k = 1; k <= need; k++) {
      const c = bytes[i + k];
      if (c === undefined || (c & 0xc0) !== 0x80) return i;
      cp = (cp << 6) | (c & 0x3f);
    }
    if (cp < min || cp > 0x10ffff || (cp >= 0xd800 && cp <= 0xdfff)) return i;
    i += need + 1;
  }
  return -1;
}

export type DecodedCsv = { ok: true; text: string; hadByteOrderMark: boolean } | { ok: false; message: string };

/** Reads the bytes of an upload as UTF-8 text: a UTF-8 byte-order mark is dropped, anything not UTF-8 is refused. */
export function decodeCsvBytes(bytes: Uint8Array, maxBytes = MAX_CSV_BYTES): DecodedCsv {
  if (bytes.length === 0) return { ok: false, message: "The file is empty." };
  if (bytes.length > maxBytes) {
    return { ok: false, message: `The file is ${formatBytes(bytes.length)}; an upload may have at most ${formatBytes(maxBytes)}. Split it into several files.` };
  }
  const b = bytes;
  if ((b[0] === 0xff && b[1] === 0xfe) || (b[0] === 0xfe && b[1] === 0xff) || (b[0] === 0 && b[1] === 0 && b[2] === 0xfe && b[3] === 0xff)) {
    return { ok: false, message: "The file is saved as UTF-16 or UTF-32; save it as “CSV UTF-8” and upload it again." };
  }
  const hadByteOrderMark = b[0] === 0xef && b[1] === 0xbb && b[2] === 0xbf;
  const body = hadByteOrderMark ? b.subarray(3) : b;
  const bad = firstInvalidUtf8(body);
  if (bad >= 0) {
    const offset = bad + (hadByteOrderMark ? 3 : 0);
    let line = 1;
    for (let i = 0; i < offset; i++) if (b[i] === 0x0a) line++;
    return {
      ok: false,
      message: `The file is not UTF-8: byte ${offset + 1} (on line ${line}) is 0x${b[offset].toString(16).toUpperCase().padStart(2, "0")}. Save it as “CSV UTF-8” and upload it again.`,
    };
  }
  if (body.includes(0)) return { ok: false, message: "The file contains NUL bytes: it is not a text file." };
  const text = new TextDecoder("utf-8", { ignoreBOM: true }).decode(body);
  if (text.trim() === "") return { ok: false, message: "The file is empty." };
  return { ok: true, text, hadByteOrderMark };
}

export function formatBytes(n: number): string {
  if (n < 1024) return `${n} bytes`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} KB`;
  return `${(n / 1024 / 1024).toFixed(1)} MB`;
}

const DELIMITERS = [",", ";", "\t", "|"] as const;
export const DELIMITER_NAMES: Record<string, string> = { ",": "comma", ";": "semicolon", "\t": "tab", "|": "vertical bar" };

/** The delimiter of the header line: the candidate that occurs most often outside quotes (comma on a tie). */
export function detectDelimiter(text: string): string {
  const counts = new Map<string, number>(DELIMITERS.map((d) => [d, 0]));
  let quoted = false;
  for (let i = 0; i < text.length; i++) {
    const c = text[i];
    if (c === '"') quoted = !quoted;
    else if (!quoted && (c === "\n" || c === "\r")) {
      if ([...counts.values()].some((n) => n > 0)) break;
    } else if (!quoted && counts.has(c)) counts.set(c, counts.get(c)! + 1);
  }
  let best: string = ",";
  for (const d of DELIMITERS) if (counts.get(d)! > counts.get(best)!) best = d;
  return best;
}

export function normaliseHeader(raw: string): string {
  return raw.normalize("NFC").replace(/^\uFEFF/, "").trim().toLowerCase().replace(/[^a-z0-9]+/g, "_").replace(/^_+|_+$/g, "");
}

type MappedColumn = { key: string; header: string } | null;

/** Maps the header cells to our columns; unknown, repeated or missing columns are file errors. */
export function mapCsvHeader(headers: string[]): { columns: MappedColumn[]; errors: string[] } {
  const errors: string[] = [];
  const seen = new Map<string, number>();
  const columns = headers.map((raw, i): MappedColumn => {
    const name = normaliseHeader(raw);
    if (name === "") {
      errors.push(`Column ${i + 1} has no header.`);
      return null;
    }
    let key: string | undefined = CSV_COLUMNS.find((c) => c.header === name || c.aliases.includes(name))?.key;
    const coefficient = COEFFICIENT_HEADER.exec(name);
    if (!key && coefficient) {
      const n = Number(coefficient[1]);
      if (n >= 1 && n <= MAX_COEFFICIENTS) key = `u${n}`;
    }
    if (!key) {
      errors.push(`Column ${i + 1} “${raw.trim()}” is not a column Bandledger reads. The columns are: ${CSV_COLUMNS.map((c) => c.header).join(", ")}, and u1_ev … u${MAX_COEFFICIENTS}_ev for potential coefficients.`);
      return null;
    }
    if (seen.has(key)) {
      errors.push(`Columns ${seen.get(key)! + 1} and ${i + 1} are both “${raw.trim()}”.`);
      return null;
    }
    seen.set(key, i);
    return { key, header: raw.trim() };
  });
  for (const c of CSV_COLUMNS) {
    if (c.required && !seen.has(c.key)) errors.push(`The column “${c.header}” is missing (${c.help}).`);
  }
  return { columns, errors };
}

function rowPayload(cells: Record<string, string>): ProposalPayload {
  const temperature = (cells.temperatureK ?? "").trim().replace(/\s*K$/i, "");
  const fit = temperature === "" || /^(?:fit|0\s*k\s*fit|fit0)$/i.test(temperature);
  const sourceText = (cells.source ?? "").trim();
  const sourceKind = guessSourceKind(sourceText);
  const method = (cells.method ?? "").trim().toLowerCase();
  const coefficients = Object.entries(cells)
    .filter(([k, v]) => /^u\d+$/.test(k) && v.trim() !== "")
    .map(([k, v]) => ({ n: k.slice(1), valueEv: v }))
    .sort((a, b) => Number(a.n) - Number(b.n));
  return readProposalPayload({
    kind: "new_record",
    material: cells.material,
    quantity: cells.quantity,
    temperatureMode: fit ? "fit0" : "stated",
    temperatureK: fit ? "" : temperature,
    valley: cells.valley,
    composition: cells.composition,
    value: cells.value,
    unit: cells.unit,
    uncertainty: cells.uncertainty,
    method: /^review/.test(method) ? "compilation" : method,
    source: {
      kind: sourceKind,
      doi: sourceKind === "doi" ? sourceText : "",
      bibtex: sourceKind === "bibtex" ? sourceText : "",
      reportNumber: sourceKind === "report" ? sourceText : "",
      title: cells["source.title"],
      authors: cells["source.authors"],
      year: cells["source.year"],
    },
    locator: cells.locator,
    notes: cells.notes,
    potentialCoefficients: coefficients,
    periodAngstrom: cells.periodAngstrom,
    validFromK: cells.validFromK,
    validToK: cells.validToK,
  });
}

const PATH_COLUMN: Record<string, string> = {
  "source.kind": "source", "source.doi": "source", "source.bibtex": "source", "source.reportNumber": "source", potentialCoefficients: "u1",
};

function columnOfPath(path: string, payload: ProposalPayload): string {
  const m = /^potentialCoefficients\.(\d+)/.exec(path);
  if (m) return `u${payload.potentialCoefficients[Number(m[1])]?.n ?? 1}`;
  return PATH_COLUMN[path] ?? path;
}

function headerOf(key: string, columns: MappedColumn[]): string {
  const present = columns.find((c) => c?.key === key);
  if (present) return present.header;
  const def = CSV_COLUMNS.find((c) => c.key === key);
  if (def) return def.header;
  if (/^u\d+$/.test(key)) return `${key}_ev`;
  return key;
}

export type CsvProgress = (done: number, total: number) => void;

/**
 * Checks a proposal CSV as uploaded (bytes): encoding, delimiter, header, size and row limits, formula cells,
 * every field of every row through the proposal schema, and rows repeating one another. The browser runs it for
 * the preview with a progress callback; the server runs it again on the same bytes before anything is written.
 */
export async function checkProposalCsv(
  bytes: Uint8Array,
  catalogue: ProposalCatalogue,
  options: { onProgress?: CsvProgress; sliceSize?: number; maxBytes?: number; maxRows?: number } = {},
): Promise<CsvCheck> {
  const maxRows = options.maxRows ?? MAX_CSV_ROWS;
  const fail = (message: string, extra: Partial<CsvCheck> = {}): CsvCheck => ({
    ok: false, fileErrors: [message], rows: [], delimiter: ",", hadByteOrderMark: false, errorCount: 1, ...extra,
  });
  const decoded = decodeCsvBytes(bytes, options.maxBytes ?? MAX_CSV_BYTES);
  if (!decoded.ok) return fail(decoded.message);
  const delimiter = detectDelimiter(decoded.text);
  const parsed = Papa.parse<string[]>(decoded.text, { delimiter, skipEmptyLines: false, quoteChar: '"' });
  const data = parsed.data;
  const headerIndex = data.findIndex((r) => r.some((c) => c.trim() !== ""));
  const base = { delimiter, hadByteOrderMark: decoded.hadByteOrderMark };
  if (headerIndex < 0) return fail("The file is empty.", base);
  const { columns, errors: headerErrors } = mapCsvHeader(data[headerIndex]);
  if (headerErrors.length) return { ok: false, fileErrors: headerErrors, rows: [], ...base, errorCount: headerErrors.length };
  const bodyIndexes: number[] = [];
  for (let i = headerIndex + 1; i < data.length; i++) if (data[i].some((c) => c.trim() !== "")) bodyIndexes.push(i);
  if (bodyIndexes.length === 0) return fail("The file has a header but no rows of values.", base);
  if (bodyIndexes.length > maxRows) {
    return fail(`The file has ${bodyIndexes.length} rows of values; one upload takes at most ${maxRows}. Split it into several files.`, base);
  }
  const parseErrors = new Map<number, string>();
  for (const e of parsed.errors) {
    if (e.row === undefined || e.code === "UndetectableDelimiter") continue;
    if (e.code === "MissingQuotes" || e.code === "InvalidQuotes") parseErrors.set(e.row, "A quoted cell is not closed, or a quote stands inside an unquoted cell.");
  }
  const rows: CsvRow[] = [];
  const seen = new Map<string, number>();
  const slice = options.sliceSize ?? 200;
  let errorCount = 0;
  for (let n = 0; n < bodyIndexes.length; n++) {
    const i = bodyIndexes[n];
    const rowNumber = i + 1;
    const raw = data[i];
    const errors: CsvIssue[] = [];
    const add = (column: string | null, message: string) => {
      if (column !== null && errors.some((e) => e.column === column)) return;
      errors.push({ row: rowNumber, column, message });
    };
    const parseError = parseErrors.get(i);
    if (parseError) add(null, parseError);
    if (raw.length !== columns.length) add(null, `The row has ${raw.length} cells where the header has ${columns.length}; check the ${DELIMITER_NAMES[delimiter]} delimiters and the quotes.`);
    const cells: Record<string, string> = {};
    columns.forEach((c, k) => {
      if (!c) return;
      const cell = raw[k] ?? "";
      if (isFormulaCell(cell)) {
        add(c.header, `“${cell.length > 40 ? `${cell.slice(0, 40)}…` : cell}” starts with “${cell[0]}” and a spreadsheet would run it as a formula; such cells are refused (write a number, or text that does not start with = + - @; for a dimensionless unit leave the cell empty).`);
        cells[c.key] = "";
      } else cells[c.key] = cell;
    });
    const payload = rowPayload(cells);
    let proposal: ValidProposal | null = null;
    const check = validateProposal(payload, catalogue);
    if (!check.ok) {
      for (const [path, message] of Object.entries(check.errors)) {
        const key = columnOfPath(path, payload);
        if (errors.some((e) => e.column === headerOf(key, columns))) continue;
        add(headerOf(key, columns), message);
      }
    } else if (errors.length === 0) {
      proposal = check.proposal;
      const key = `${proposal.material.id}|${proposal.quantity.key}|${proposal.conditionKey}`;
      const earlier = seen.get(key);
      if (earlier !== undefined) {
        add(null, `Same material, quantity and conditions as row ${earlier}: one upload proposes one value per record.`);
        proposal = null;
      } else seen.set(key, rowNumber);
    }
    if (errors.length) proposal = null;
    errorCount += errors.length;
    rows.push({ row: rowNumber, payload, errors, proposal });
    if (options.onProgress && ((n + 1) % slice === 0 || n + 1 === bodyIndexes.length)) {
      options.onProgress(n + 1, bodyIndexes.length);
      await new Promise((r) => setTimeout(r, 0));
    }
  }
  return { ok: errorCount === 0, fileErrors: [], rows, ...base, errorCount };
}

/** One line per problem, naming row and column, for pages and messages. */
export function describeCsvIssue(issue: CsvIssue): string {
  const where = [issue.row !== null ? `Row ${issue.row}` : null, issue.column ? `column “${issue.column}”` : null].filter(Boolean).join(", ");
  return where ? `${where}: ${issue.message}` : issue.message;
}

export const CSV_TEMPLATE_HEADER = [...CSV_COLUMNS.map((c) => c.header), "u1_ev"];

/** The template offered for download: our header and example rows keyed by header (nothing in it can run as a formula). */
export function proposalCsvTemplate(examples: Record<string, string>[] = []): string {
  return toCsv([CSV_TEMPLATE_HEADER, ...examples.map((r) => CSV_TEMPLATE_HEADER.map((h) => r[h] ?? ""))]);
}

/** A row of the preview: what it proposes, in a few words, and its errors. */
export type CsvPreviewRow = {
  row: number;
  material: string;
  quantity: string;
  conditions: string;
  value: string;
  /** Filled by the server: "new record", or the record's current value it would replace. */
  target: string | null;
  errors: CsvIssue[];
};

export function previewRowOf(r: CsvRow): CsvPreviewRow {
  const p = r.proposal;
  const conditions = p?.conditions
    ? conditionsLabel(p.quantity.key, p.conditions)
    : [r.payload.composition && `x = ${r.payload.composition}`, r.payload.valley, r.payload.temperatureK && `${r.payload.temperatureK} K`].filter(Boolean).join(", ");
  const unit = p ? p.quantity.canonicalUnit : r.payload.unit;
  return {
    row: r.row,
    material: p?.material.key ?? r.payload.material,
    quantity: p?.quantity.name ?? r.payload.quantity,
    conditions,
    value: p?.prepared ? `${p.prepared.value}${unit && unit !== "1" ? ` ${unit === "m0" ? "m₀" : unit}` : ""}` : `${r.payload.value} ${r.payload.unit}`.trim(),
    target: null,
    errors: r.errors,
  };
}

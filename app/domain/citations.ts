/** A CSL-JSON item, as far as Bandledger reads it (the full item is kept as parsed). */
export type CslItem = {
  id?: string;
  type?: string;
  title?: string;
  author?: { family?: string; given?: string; literal?: string }[];
  "container-title"?: string;
  "container-title-short"?: string;
  volume?: string | number;
  issue?: string | number;
  page?: string;
  issued?: { "date-parts"?: (string | number)[][]; literal?: string };
  DOI?: string;
  publisher?: string;
  [field: string]: unknown;
};

// A DOI is "10." + a registrant code of digits (sub-codes after dots) + "/" + a suffix without spaces (DOI Handbook §2.2).
const DOI_PATTERN = /^10\.\d{4,9}(?:\.\d+)*\/\S+$/;
const DOI_PREFIXES = /^(?:doi:\s*|(?:https?:\/\/)?(?:dx\.)?doi\.org\/)/i;

export type DoiResult = { ok: true; doi: string } | { ok: false; message: string };

/**
 * Checks the format of a DOI typed as "10.1063/1.1368156", "doi:10.1063/1.1368156" or a doi.org link and returns
 * the bare DOI. Format only: nothing is looked up on the network.
 */
export function parseDoi(raw: string): DoiResult {
  let text = raw.trim();
  if (text === "") return { ok: false, message: "Enter a DOI." };
  text = text.replace(DOI_PREFIXES, "");
  try {
    if (/%[0-9A-F]{2}/i.test(text)) text = decodeURIComponent(text);
  } catch {
    return { ok: false, message: "The DOI has a broken percent-escape." };
  }
  text = text.replace(/[.,;]+$/, "");
  if (!DOI_PATTERN.test(text)) {
    return { ok: false, message: "A DOI starts with 10., then a registrant number, a slash and a suffix, e.g. 10.1063/1.1368156." };
  }
  if (text.length > 255) return { ok: false, message: "The DOI is longer than 255 characters." };
  return { ok: true, doi: text };
}

export function isDoi(raw: string): boolean {
  return parseDoi(raw).ok;
}

/** DOIs compare without regard to case (DOI Handbook §2.4). */
export function sameDoi(a: string, b: string): boolean {
  return a.toLowerCase() === b.toLowerCase();
}

export function doiUrl(doi: string): string {
  return `https://doi.org/${doi.split("/").map((part, i) => (i === 0 ? part : encodeURIComponent(part))).join("/")}`;
}

// Internal report numbers: letters, digits and the separators teams use (KD-EPI-2026-014, TR/2025/7).
const REPORT_PATTERN = /^[A-Za-z0-9][A-Za-z0-9._\/-]{2,79}$/;

export function parseReportNumber(raw: string): { ok: true; reportNumber: string } | { ok: false; message: string } {
  const text = raw.trim();
  if (!REPORT_PATTERN.test(text)) return { ok: false, message: "A report number is 3 to 80 letters, digits, dots, dashes or slashes, e.g. KD-EPI-2026-014." };
  return { ok: true, reportNumber: text };
}

export function cslYear(item: CslItem): number | null {
  const y = item.issued?.["date-parts"]?.[0]?.[0];
  const n = typeof y === "string" ? Number.parseInt(y, 10) : y;
  return typeof n === "number" && Number.isFinite(n) ? n : null;
}

export function cslAuthors(item: CslItem, max = 3): string {
  const names = (item.author ?? []).map((a) => a.literal ?? [a.given, a.family].filter(Boolean).join(" ")).filter(Boolean);
  if (names.length === 0) return "";
  if (names.length > max) return `${names.slice(0, max).join(", ")} et al.`;
  return names.join(", ");
}

/** A one-line reference of our own form: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815–5875 (2001)". */
export function formatCslReference(item: CslItem): string {
  const container = item["container-title-short"] ?? item["container-title"] ?? item.publisher ?? "";
  const volume = item.volume !== undefined ? ` ${item.volume}` : "";
  const page = item.page ? `, ${String(item.page).replace(/-+/g, "–")}` : "";
  const year = cslYear(item);
  const parts = [cslAuthors(item), `${container}${volume}${page}`.trim()].filter(Boolean).join(", ");
  return `${parts}${year ? ` (${year})` : ""}`;
}

export type SourceSummary = {
  kind: "doi" | "bibtex" | "report";
  title: string;
  authors: string | null;
  year: number | null;
  doi: string | null;
  reportNumber: string | null;
};

function familyName(author: string): string {
  const words = author.trim().replace(/\s+et al\.?$/i, "").split(/\s+/);
  return words[words.length - 1] ?? "";
}

/** A short label for tables: "Vurgaftman et al. 2001", "Sze & Ng 2007", or the report number. */
export function shortSourceLabel(s: SourceSummary): string {
  if (s.kind === "report" && s.reportNumber) return s.reportNumber;
  const authors = (s.authors ?? "").split(",").map((a) => a.trim()).filter(Boolean);
  const etAl = /et al\.?$/i.test(s.authors ?? "");
  let who = "";
  if (authors.length === 1 && !etAl) who = familyName(authors[0]);
  else if (authors.length === 2 && !etAl) who = `${familyName(authors[0])} & ${familyName(authors[1])}`;
  else if (authors.length >= 1) who = `${familyName(authors[0])} et al.`;
  if (!who) return s.title.length > 40 ? `${s.title.slice(0, 39)}…` : s.title;
  return s.year ? `${who} ${s.year}` : who;
}

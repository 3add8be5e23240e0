import { logger, plugins } from "@citation-js/core";
import "@citation-js/plugin-bibtex";
import { cslAuthors, cslYear, parseDoi, type CslItem } from "~/domain/citations";

export type ParsedBibtex = {
  key: string;
  csl: CslItem;
  title: string;
  authors: string | null;
  year: number | null;
  doi: string | null;
};

export type BibtexResult = { ok: true; entry: ParsedBibtex } | { ok: false; message: string };

/**
 * Parses one pasted BibTeX entry into CSL-JSON with citation-js and its BibTeX plugin (server only: the library is
 * large and written for Node). The input is forced to BibTeX, so nothing is ever fetched from the network.
 */
export function parseBibtexEntry(text: string): BibtexResult {
  const trimmed = text.trim();
  if (!trimmed.startsWith("@")) return { ok: false, message: "A BibTeX entry starts with @, e.g. @article{key, …}." };
  let items: Record<string, unknown>[];
  try {
    items = plugins.input.chain(trimmed, { forceType: "@biblatex/text", generateGraph: false, strict: true });
  } catch (e) {
    return { ok: false, message: `The BibTeX entry could not be read: ${(e as Error).message.split("\n")[0]}` };
  } finally {
    // The library keeps every log line in memory whatever the level; a long-running server must not.
    if (Array.isArray(logger._log)) logger._log.length = 0;
  }
  if (items.length === 0) return { ok: false, message: "No BibTeX entry was found in the text." };
  if (items.length > 1) return { ok: false, message: `Paste one entry at a time (found ${items.length}).` };
  const csl = items[0] as CslItem;
  const title = typeof csl.title === "string" ? csl.title.trim() : "";
  if (!title) return { ok: false, message: "The BibTeX entry has no title." };
  const doi = typeof csl.DOI === "string" ? parseDoi(csl.DOI) : null;
  if (doi && !doi.ok) return { ok: false, message: `The entry's DOI is malformed: ${doi.message}` };
  const key = String(csl["citation-key"] ?? csl.id ?? "").trim();
  if (!key) return { ok: false, message: "The BibTeX entry has no citation key." };
  return { ok: true, entry: { key, csl, title, authors: cslAuthors(csl, 20) || null, year: cslYear(csl), doi: doi?.ok ? doi.doi : null } };
}

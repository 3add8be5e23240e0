import { eq } from "drizzle-orm";
import type { CslItem } from "~/domain/citations";
import type { SourceInput } from "~/domain/registry-schemas";
import { sources } from "../db/schema";
import { parseBibtexEntry } from "./bibtex";
import { RegistryError } from "./errors";
import type { Executor } from "./executor";

export type SourceRow = typeof sources.$inferSelect;

/**
 * Finds or adds a source by its natural key (DOI, BibTeX key or report number) and returns its id. A pasted BibTeX
 * entry is parsed into CSL-JSON; when it carries a DOI it is kept under that DOI, so a DOI entered once and its
 * BibTeX later are one source.
 */
export async function ensureSource(ex: Executor, input: SourceInput, createdBy: number | null = null): Promise<number> {
  if (input.kind === "doi") {
    const [found] = await ex.select({ id: sources.id }).from(sources).where(eq(sources.doi, input.doi));
    if (found) return found.id;
    const [{ id }] = await ex
      .insert(sources)
      .values({ kind: "doi", doi: input.doi, title: input.title, authors: input.authors ?? null, year: input.year ?? null, createdBy })
      .$returningId();
    return id;
  }
  if (input.kind === "report") {
    const [found] = await ex.select({ id: sources.id }).from(sources).where(eq(sources.reportNumber, input.reportNumber));
    if (found) return found.id;
    const [{ id }] = await ex
      .insert(sources)
      .values({ kind: "report", reportNumber: input.reportNumber, title: input.title, authors: input.authors ?? null, year: input.year ?? null, createdBy })
      .$returningId();
    return id;
  }
  const parsed = parseBibtexEntry(input.bibtex);
  if (!parsed.ok) throw new RegistryError("invalid", parsed.message, { fieldErrors: { bibtex: parsed.message } });
  const e = parsed.entry;
  const [found] = e.doi
    ? await ex.select({ id: sources.id, kind: sources.kind }).from(sources).where(eq(sources.doi, e.doi))
    : await ex.select({ id: sources.id, kind: sources.kind }).from(sources).where(eq(sources.bibtexKey, e.key));
  const values = {
    kind: "bibtex" as const,
    doi: e.doi,
    bibtexKey: e.key,
    bibtex: input.bibtex.trim(),
    csl: e.csl as CslItem,
    title: e.title.slice(0, 500),
    authors: e.authors?.slice(0, 500) ?? null,
    year: e.year,
  };
  if (found) {
    // A bare DOI gains its structured reference; an existing BibTeX entry is left as it was first entered.
    if (found.kind === "doi") await ex.update(sources).set(values).where(eq(sources.id, found.id));
    return found.id;
  }
  const [{ id }] = await ex.insert(sources).values({ ...values, createdBy }).$returningId();
  return id;
}

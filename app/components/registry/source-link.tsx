import { doiUrl } from "~/domain/citations";

export type SourceLinkData = { id: number; kind: "doi" | "bibtex" | "report"; label: string; title: string; reference?: string; doi: string | null; reportNumber: string | null };

/** A source's short label linking to its page, with the locator (page, table, equation) beside it. */
export function SourceLink({ source, locator }: { source: SourceLinkData | null; locator?: string | null }) {
  if (!source) return <span className="text-muted">no source</span>;
  return (
    <span>
      <a href={`/sources/${source.id}`} title={source.title}>{source.label}</a>
      {locator ? <span className="text-muted">, {locator}</span> : null}
    </span>
  );
}

/** The full reference of a source: title, authors and year, the DOI as a link or the internal report number. */
export function SourceReference({ source }: { source: SourceLinkData }) {
  return (
    <span>
      <span className="font-medium">{source.title}</span>
      {source.reference ? <span className="text-muted">. {source.reference}</span> : null}
      {source.doi ? (
        <>
          {" "}· <a href={doiUrl(source.doi)} rel="noreferrer">doi:{source.doi}</a>
        </>
      ) : null}
      {source.kind === "report" && source.reportNumber ? <span className="text-muted"> · internal report {source.reportNumber}</span> : null}
    </span>
  );
}

import { doiUrl } from "~/domain/citations";
import type { SourceRef } from "~/domain/revision-view";

/** A source's short label linking to its page (a source typed into a proposal has none yet), with the locator beside it. */
export function SourceLink({ source, locator }: { source: SourceRef | null; locator?: string | null }) {
  if (!source) return <span className="text-muted">no source</span>;
  return (
    <span>
      {source.id === null ? <span title={source.title}>{source.label}</span> : <a href={`/sources/${source.id}`} title={source.title}>{source.label}</a>}
      {locator ? <span className="text-muted">, {locator}</span> : null}
    </span>
  );
}

/** The full reference of a source: title, authors and year, the DOI as a link or the internal report number. */
export function SourceReference({ source }: { source: SourceRef }) {
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

import { CheckReportView } from "~/components/checks";
import type { CheckReportResponse } from "~/domain/check-report";

/**
 * Where the consistency checks of a proposal are shown on its review page: the report of the checks service, or,
 * when none could be made, a plain sentence rather than a verdict nobody computed.
 */
export function ConsistencyChecks({ report }: { report: CheckReportResponse | null }) {
  return (
    <div data-slot="consistency-checks">
      <CheckReportView report={report?.report ?? null} message={report?.message ?? (report ? null : "No consistency checks have run on this proposal yet.")} />
    </div>
  );
}

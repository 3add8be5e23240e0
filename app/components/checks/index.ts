export { CheckReportView } from "./check-report-view";
export { LiveCheck, useLiveCheck, LIVE_CHECK_URL } from "./live-check";
export { NfePlot, type NfePlotInput } from "./nfe-plot";
export { VerdictBadge } from "./verdict-badge";
export { CheckExamples, LengthField, useRecheckedForm, type CheckExample } from "./check-page";
export { recordHref } from "./format";

import { CODATA_EDITION, type Verdict } from "../physics";
import { bowingCheck } from "./bowing";
import { epmCheck } from "./epm";
import { kaneCheck } from "./kane";
import { nfeCheck } from "./nfe";
import { rangeCheck } from "./range";
import { baseResult, conditionsText, failOnDomainError, quantityOf, sameConditions, TEMPERATURE_INDEPENDENT, type ConsistencyCheck, type Context } from "./shared";
import type { CheckReport, CheckReportInputs, CheckResult } from "./types";
import { varshniCheck } from "./varshni";

/** The checks behind the report, in the order their results are listed. A new check is one module and one entry here. */
export const CHECKS: readonly ConsistencyCheck[] = [rangeCheck, nfeCheck, varshniCheck, kaneCheck, bowingCheck, epmCheck];

const RANK: Record<Verdict, number> = { none: 0, pass: 1, warn: 2, fail: 3 };

/** The worst of several verdicts; none when there are none. */
export function worstVerdict(verdicts: Iterable<Verdict>): Verdict {
  let worst: Verdict = "none";
  for (const v of verdicts) if (RANK[v] > RANK[worst]) worst = v;
  return worst;
}

// One check's results; a domain error it did not catch itself (while choosing its inputs) is its failed result.
function resultsOf(check: ConsistencyCheck, ctx: Context, notRun: CheckReport["notRun"]): CheckResult[] {
  try {
    const result = check.run(ctx, notRun);
    return result === null ? [] : Array.isArray(result) ? result : [result];
  } catch (e) {
    return [failOnDomainError(baseResult(`${check.kind}:error`, check.kind, check.title, "", ""), e)];
  }
}

function subjectLabel(inputs: CheckReportInputs): string {
  const q = quantityOf(inputs, inputs.subject.quantityKey);
  const conditions = conditionsText(inputs.subject, !TEMPERATURE_INDEPENDENT.has(inputs.subject.quantityKey));
  return `${inputs.material.key} · ${q?.name ?? inputs.subject.quantityKey}${conditions ? ` (${conditions})` : ""}`;
}

/**
 * The consistency checks of one value against the material's other current values (CHECKS: range, nearly-free-electron
 * gap with stated potential coefficients, Varshni fit against stated gaps, Kane mass, alloy bowing, pseudopotential gaps from stated form factors). Pure: it runs
 * on the server and in the browser alike.
 */
export function buildCheckReport(inputs: CheckReportInputs): CheckReport {
  const subject = inputs.subject;
  const values = inputs.values.filter(
    (v) => !(subject.recordId !== null && v.recordId === subject.recordId) && !sameConditions(v, subject),
  );
  if (subject.value !== null) values.push(subject);
  const ctx: Context = { inputs, subject, values };
  const notRun: CheckReport["notRun"] = [];
  const results: CheckResult[] = [];
  if (subject.value !== null) for (const check of CHECKS) results.push(...resultsOf(check, ctx, notRun));
  return {
    origin: inputs.origin,
    subject: {
      label: subjectLabel(inputs),
      materialKey: inputs.material.key,
      quantityKey: subject.quantityKey,
      value: subject.value,
      unit: subject.unit,
      recordId: subject.recordId,
      revisionId: subject.revisionId,
    },
    status: worstVerdict(results.map((r) => r.status)),
    results,
    notRun,
    codataEdition: CODATA_EDITION,
  };
}

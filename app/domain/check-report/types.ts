import type { EpmDetail } from "./epm";
import type { Verdict } from "../physics";
import type { Valley } from "../quantities";

// The check report of one value (a record's current revision, or what a proposal would make it): which of the
// consistency checks apply, what each one took from the ledger, and whether the numbers agree.

export type CheckKind = "range" | "nfe" | "varshni" | "kane" | "bowing" | "epm";
export type { Verdict };

/** One stated value the checks may use: a record's current revision, or what a proposal would make it. */
export interface CheckValue {
  quantityKey: string;
  valley: Valley | null;
  /** Kelvin as a decimal string; null for a 0 K fit parameter or a temperature-independent quantity. */
  temperatureK: string | null;
  composition: string | null;
  /** Exact decimal in the quantity's canonical unit; null while a proposal has no readable value. */
  value: string | null;
  unit: string;
  /** The stated standard uncertainty in the same unit; null or absent when the revision states none. */
  uncertainty?: string | null;
  recordId: number | null;
  revisionId: number | null;
  sourceLabel: string | null;
  validFromK: string | null;
  validToK: string | null;
  potentialCoefficients?: readonly { n: number; valueEv: string }[] | null;
  periodAngstrom?: string | null;
}

/** What the checks need of a quantity: its symbol, plausible range and tolerance as they stand in the database. */
export interface CheckQuantity {
  key: string;
  symbol: string;
  name: string;
  canonicalUnit: string;
  rangeMin: string | null;
  rangeMax: string | null;
  checkTolerance: string | null;
}

export interface CheckMaterial {
  key: string;
  name: string;
  kind: "element" | "binary" | "alloy";
  structure?: "diamond" | "zinc_blende" | "wurtzite";
}

export interface CheckReportInputs {
  /** A record's current revision, or a proposal's value. */
  origin: "record" | "proposal";
  material: CheckMaterial;
  subject: CheckValue;
  /** The material's other current values; one with the subject's record or conditions is replaced by the subject. */
  values: readonly CheckValue[];
  quantities: readonly CheckQuantity[];
  /** Alloys: the end members A (x = 1) and B (x = 0) with their current values, for the bowing check. */
  endMembers?: { a: { material: CheckMaterial; values: readonly CheckValue[] }; b: { material: CheckMaterial; values: readonly CheckValue[] } } | null;
}

export interface CheckInput {
  /** e.g. "Eg(Γ, 0 K)", "α(Γ)", "Ep". */
  symbol: string;
  value: string;
  unit: string;
  recordId: number | null;
  revisionId: number | null;
  /** "subject": the value under check; "registry": another current value; "default": a convention of the check. */
  from: "subject" | "registry" | "default";
  /** Whose value it is when not the checked material's own (an alloy's end member). */
  material: string | null;
  sourceLabel: string | null;
}

export interface CheckFigure {
  label: string;
  value: string;
  unit: string;
}

export interface NfeDetail {
  periodAngstrom: string;
  periodFrom: "revision" | "lattice constant";
  massM0: string;
  gapIndex: number;
  kPiOverA: 0 | 1;
  coefficients: { n: number; valueEv: string }[];
  firstOrder: { gapEv: string; lowerEv: string; upperEv: string };
  centralEquation: { gapEv: string; lowerEv: string; upperEv: string; planeWaves: number; converged: boolean };
}

export interface CheckResult {
  /** Stable within a report, e.g. "varshni:G:300". */
  id: string;
  kind: CheckKind;
  title: string;
  status: Verdict;
  formula: string;
  reference: string;
  inputs: CheckInput[];
  stated: CheckFigure | null;
  computed: CheckFigure[];
  residual: CheckFigure | null;
  tolerance: CheckFigure | null;
  notes: string[];
  codataEdition: string;
  nfe?: NfeDetail;
  epm?: EpmDetail;
}

export interface CheckReport {
  origin: "record" | "proposal";
  subject: {
    label: string;
    materialKey: string;
    quantityKey: string;
    value: string | null;
    unit: string;
    recordId: number | null;
    revisionId: number | null;
  };
  /** The worst result: fail over warn over pass; none when no check applied. */
  status: Verdict;
  results: CheckResult[];
  /** Checks that would apply to this value but lack inputs, and what is missing. */
  notRun: { kind: CheckKind; reason: string }[];
  codataEdition: string;
}

/** What the check-report service and its resource route answer: a report, or why there is none yet. */
export interface CheckReportResponse {
  report: CheckReport | null;
  /** Why some or all checks could not run yet (an unreadable value, no material chosen); null when all is well. */
  message: string | null;
}

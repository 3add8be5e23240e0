import type { Method } from "./registry-schemas";

/** What a revision states beside its value, method and source, as stored (and as a proposal would store it). */
export type RevisionDetails = {
  uncertainty: string | null;
  locator: string | null;
  notes: string | null;
  potentialCoefficients: { n: number; valueEv: string }[] | null;
  periodAngstrom: string | null;
  validFromK: string | null;
  validToK: string | null;
};

/** A source as the pages show it; id is null for one typed into a proposal and not stored yet. */
export type SourceRef = {
  id: number | null;
  kind: "doi" | "bibtex" | "report";
  label: string;
  title: string;
  reference: string;
  doi: string | null;
  reportNumber: string | null;
};

/** current: the record's current value; superseded: every other stored one; retired: the one that retired it. */
export type StoredRevisionState = "current" | "superseded" | "retired";
/** proposed: what a proposal would add, not stored yet. */
export type RevisionState = StoredRevisionState | "proposed";

/**
 * One revision as every page shows it: a record's history, its provenance, the comparison of two revisions, and the
 * two sides of a proposal. A proposed revision has no id, record or number until it is approved.
 */
export type RevisionView = RevisionDetails & {
  id: number | null;
  recordId: number | null;
  seq: number | null;
  kind: "value" | "retirement";
  state: RevisionState;
  /** Exact decimal in `unit`; null for a retirement (or a proposal whose value does not read yet). */
  value: string | null;
  /** The quantity's canonical unit, or for a proposal whose value does not convert, the unit as typed. */
  unit: string;
  significantDigits: number | null;
  inputValue: string | null;
  inputUnit: string | null;
  method: Method | null;
  proposedBy: string | null;
  approvedBy: string | null;
  proposedAt: string | null;
  approvedAt: string | null;
  proposalId: number | null;
  source: SourceRef | null;
};

/** A revision the registry holds: always with its id, record and number, and a stored source. */
export type StoredRevisionView = RevisionView & {
  id: number;
  recordId: number;
  seq: number;
  state: StoredRevisionState;
  source: (SourceRef & { id: number }) | null;
};

import type { CheckInput } from "../check-report";
import { toDecimalString } from "../decimal";

// The GUM law of propagation of uncertainty, first order (JCGM 100:2008, §5.1.2): for y = f(x1, …, xN) with
// uncorrelated inputs, u_c²(y) = Σ (∂f/∂x_i)² u²(x_i). Each derived value is carried as its value together with its
// sensitivity coefficients c_i = ∂f/∂x_i to every stated input it came from, so chains (Varshni, then bowing, then
// the Kane mass) combine by the chain rule and an input met twice (GaAs a(300 K) as end member and as substrate) is
// counted once, with its coefficients added.

export const GUM_METHOD = "GUM law of propagation, first order, uncorrelated inputs (JCGM 100:2008, 5.1.2)";

/** Significant digits of a combined standard uncertainty in exports: enough for further calculation (JCGM 100, 7.2.6). */
export const UNCERTAINTY_SIGNIFICANT_DIGITS = 6;

/** A stated value used by a derivation: a pinned or current revision with its standard uncertainty (null: not stated). */
export interface SourceInput extends CheckInput {
  uncertainty: string | null;
}

/** One line of the uncertainty budget: the input, its sensitivity coefficient and its contribution |c_i|·u(x_i). */
export interface DerivedInput extends SourceInput {
  /** ∂y/∂x_i in the unit of the result per unit of the input. */
  sensitivity: string;
  /** |∂y/∂x_i|·u(x_i) in the unit of the result; null when the input states no uncertainty. */
  contribution: string | null;
}

export interface CombinedUncertainty {
  /** The combined standard uncertainty u_c from the inputs that state one; null when none does (never a zero). */
  standard: string | null;
  /** complete: every input that moves the result states an uncertainty; partial: some do; not-stated: none does. */
  status: "complete" | "partial" | "not-stated";
  /** Symbols of the inputs without a stated uncertainty, so "± not stated" is said, never shown as zero. */
  notStated: string[];
  method: string;
}

/** A value with its sensitivity to each source input (keyed by revision), for propagation by the chain rule. */
export interface Propagated {
  value: number;
  terms: ReadonlyMap<string, { input: SourceInput; c: number }>;
}

function keyOf(input: SourceInput): string {
  return input.revisionId !== null ? `rev:${input.revisionId}` : `${input.material ?? ""}:${input.symbol}`;
}

/** A stated input itself: its value, with sensitivity 1 to itself. */
export function stated(input: SourceInput): Propagated {
  return { value: Number(input.value), terms: new Map([[keyOf(input), { input, c: 1 }]]) };
}

/** y = value, with ∂y/∂(each part) given: the chain rule sums c·(the part's own coefficients). */
export function combine(value: number, parts: readonly (readonly [Propagated, number])[]): Propagated {
  const terms = new Map<string, { input: SourceInput; c: number }>();
  for (const [part, coefficient] of parts) {
    for (const [key, t] of part.terms) {
      const had = terms.get(key);
      terms.set(key, { input: had?.input ?? t.input, c: (had?.c ?? 0) + coefficient * t.c });
    }
  }
  return { value, terms };
}

/** The budget and the combined standard uncertainty of a propagated value. */
export function uncertaintyOf(p: Propagated): { inputs: DerivedInput[]; uncertainty: CombinedUncertainty } {
  let sumOfSquares = 0;
  let moving = 0;
  let movingStated = 0;
  const notStated: string[] = [];
  const inputs: DerivedInput[] = [];
  for (const { input, c } of p.terms.values()) {
    const u = input.uncertainty === null ? null : Number(input.uncertainty);
    const moves = c !== 0;
    if (moves) moving++;
    let contribution: string | null = null;
    if (u !== null && Number.isFinite(u)) {
      const part = Math.abs(c) * u;
      sumOfSquares += part * part;
      if (moves) movingStated++;
      contribution = toDecimalString(part, UNCERTAINTY_SIGNIFICANT_DIGITS);
    } else if (moves) {
      notStated.push(input.material ? `${input.material} ${input.symbol}` : input.symbol);
    }
    inputs.push({ ...input, sensitivity: toDecimalString(c), contribution });
  }
  // A result that no input moves is exact; one whose moving inputs state no uncertainty has none to give, not a zero.
  const status = moving > 0 && movingStated === 0 ? "not-stated" : notStated.length ? "partial" : "complete";
  return {
    inputs,
    uncertainty: {
      standard: status === "not-stated" ? null : toDecimalString(Math.sqrt(sumOfSquares), UNCERTAINTY_SIGNIFICANT_DIGITS),
      status,
      notStated,
      method: GUM_METHOD,
    },
  };
}

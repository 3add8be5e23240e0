import { requireFinite, requirePositive } from "./validate";
import { type Verdict, verdictFromResidual } from "./verdict";

export interface KaneParameters {
  /** Kane energy Ep in eV. */
  epEv: number;
  /** Remote-band parameter F (dimensionless). */
  f: number;
  egEv: number;
  deltaSoEv: number;
}

export interface KaneCheck {
  /** The effective mass m* in units of m0, or null when m0/m* comes out non-positive. */
  massM0: number | null;
  inverseMass: number;
  statedMassM0: number;
  /** (stated − computed)/computed. */
  relativeResidual: number | null;
  relativeTolerance: number;
  verdict: Exclude<Verdict, "none">;
}

/** Default relative tolerance of the mass check: stated masses usually carry two or three digits. */
export const DEFAULT_KANE_RELATIVE_TOLERANCE = 0.02;

// Kane (1957) [Kane57]: m0/m* = 1 + 2F + Ep(Eg + 2Δso/3)/(Eg(Eg + Δso)).
export function kaneInverseMass(p: KaneParameters): number {
  const ep = requireFinite(p.epEv, "Ep");
  const f = requireFinite(p.f, "F");
  const eg = requirePositive(p.egEv, "Eg");
  const delta = requireFinite(p.deltaSoEv, "Δso");
  if (!(eg + delta > 0)) throw new RangeError(`Eg + Δso must be positive (got ${eg + delta})`);
  return 1 + 2 * f + (ep * (eg + (2 * delta) / 3)) / (eg * (eg + delta));
}

/** The effective mass m* in units of m0 from the Kane formula; throws when m0/m* is not positive. */
export function kaneMassM0(p: KaneParameters): number {
  const inverse = kaneInverseMass(p);
  if (!(inverse > 0)) throw new RangeError(`the Kane formula gives m0/m* = ${inverse}, not a positive mass`);
  return 1 / inverse;
}

// pass when |stated − computed| ≤ tol·computed, warn up to 3·tol, fail beyond (or when no positive mass results).
export function checkKaneMass(
  p: KaneParameters & { statedMassM0: number; relativeTolerance?: number },
): KaneCheck {
  const statedMassM0 = requirePositive(p.statedMassM0, "stated mass");
  const relativeTolerance = requirePositive(p.relativeTolerance ?? DEFAULT_KANE_RELATIVE_TOLERANCE, "relative tolerance");
  const inverseMass = kaneInverseMass(p);
  if (!(inverseMass > 0)) {
    return { massM0: null, inverseMass, statedMassM0, relativeResidual: null, relativeTolerance, verdict: "fail" };
  }
  const massM0 = 1 / inverseMass;
  const relativeResidual = (statedMassM0 - massM0) / massM0;
  return {
    massM0,
    inverseMass,
    statedMassM0,
    relativeResidual,
    relativeTolerance,
    verdict: verdictFromResidual(relativeResidual, relativeTolerance),
  };
}

/** Partial derivatives of the Kane mass (in m0) by each input, for the GUM law of propagation. */
export interface KaneSensitivities {
  ep: number;
  f: number;
  eg: number;
  deltaSo: number;
}

// m* = 1/D with D = 1 + 2F + Ep·g, g = (Eg + 2Δ/3)/(Eg(Eg + Δ)); ∂m*/∂v = −m*²·∂D/∂v, the partials of g taken analytically.
export function kaneMassSensitivities(p: KaneParameters): KaneSensitivities {
  const mass = kaneMassM0(p);
  const { epEv: ep, egEv: eg, deltaSoEv: delta } = p;
  const n = eg + (2 * delta) / 3;
  const q = eg * (eg + delta);
  const g = n / q;
  const dgdEg = (q - n * (2 * eg + delta)) / (q * q);
  const dgdDelta = ((2 / 3) * q - n * eg) / (q * q);
  const m2 = mass * mass;
  return { ep: -m2 * g, f: -m2 * 2, eg: -m2 * ep * dgdEg, deltaSo: -m2 * ep * dgdDelta };
}

import { DEFAULT_EPM_TOLERANCE_EV, DEFAULT_KANE_RELATIVE_TOLERANCE, DEFAULT_NFE_TOLERANCE_EV } from "../physics";

/** The quantity whose check tolerance the pseudopotential check uses (the admin sets it there). */
export const EPM_TOLERANCE_QUANTITY = "ff_vs3";

/** Default tolerances of the checks where the quantities table states none. */
export const DEFAULT_TOLERANCES = {
  /** Absolute, eV: the NFE, Varshni and bowing checks compare gaps. */
  eg: String(DEFAULT_NFE_TOLERANCE_EV),
  /** Relative (a fraction of the computed mass): the Kane check. */
  me: String(DEFAULT_KANE_RELATIVE_TOLERANCE),
  /** Absolute, eV: the pseudopotential check (on the V_S(3) row). */
  [EPM_TOLERANCE_QUANTITY]: String(DEFAULT_EPM_TOLERANCE_EV),
} as const;

/** Which quantity's tolerance each check uses, and how it reads. */
export const TOLERANCE_RULES = [
  { quantityKey: "eg", mode: "absolute", unit: "eV", usedBy: "nearly-free-electron, Varshni and bowing checks", max: "1" },
  { quantityKey: "me", mode: "relative", unit: "", usedBy: "Kane check (a fraction of the computed mass: 0.02 is 2 %)", max: "0.5" },
  { quantityKey: EPM_TOLERANCE_QUANTITY, mode: "absolute", unit: "eV", usedBy: "pseudopotential check of the gaps at Γ, X, L from the form factors (a three-form-factor model is fitted to a few transitions)", max: "1" },
] as const;

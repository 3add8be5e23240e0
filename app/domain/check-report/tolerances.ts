import { DEFAULT_KANE_RELATIVE_TOLERANCE, DEFAULT_NFE_TOLERANCE_EV } from "../physics";

/** Default tolerances of the checks where the quantities table states none. */
export const DEFAULT_TOLERANCES = {
  /** Absolute, eV: the NFE, Varshni and bowing checks compare gaps. */
  eg: String(DEFAULT_NFE_TOLERANCE_EV),
  /** Relative (a fraction of the computed mass): the Kane check. */
  me: String(DEFAULT_KANE_RELATIVE_TOLERANCE),
} as const;

/** Which quantity's tolerance each check uses, and how it reads. */
export const TOLERANCE_RULES = [
  { quantityKey: "eg", mode: "absolute", unit: "eV", usedBy: "nearly-free-electron, Varshni and bowing checks", max: "1" },
  { quantityKey: "me", mode: "relative", unit: "", usedBy: "Kane check (a fraction of the computed mass: 0.02 is 2 %)", max: "0.5" },
] as const;

// The check report: one module per check behind report.ts, which lists them in CHECKS and runs the ones that apply.
export * from "./types";
export { DEFAULT_TOLERANCES, TOLERANCE_RULES } from "./tolerances";
export { findCheckValue, type ConsistencyCheck, type Context, type NotRun } from "./shared";
export { varshniFitOf, type VarshniFit } from "./varshni";
export { buildCheckReport, CHECKS, worstVerdict } from "./report";

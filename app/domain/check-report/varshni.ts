import { varshniGap, type FittedRangeK, type VarshniParameters } from "../physics";
import type { Valley } from "../quantities";
import {
  attempt, baseResult, figure, findCheckValue, inputOf, isNumber, keyOf, num, sameDecimal, symbolOf, toleranceOf, valleyLabel,
  type ConsistencyCheck, type Context, type NotRun,
} from "./shared";
import type { CheckResult, CheckValue } from "./types";

// Stated gaps against the 0 K Varshni fit of their valley [Varshni (1967)]; strict, without a warn band (docs/decisions/002).

export interface VarshniFit {
  eg0: CheckValue;
  alpha: CheckValue;
  beta: CheckValue;
  parameters: VarshniParameters;
  range: FittedRangeK | undefined;
}

function fittedRange(values: CheckValue[]): FittedRangeK | undefined {
  let minK = -Infinity;
  let maxK = Infinity;
  for (const v of values) {
    if (isNumber(v.validFromK)) minK = Math.max(minK, num(v.validFromK));
    if (isNumber(v.validToK)) maxK = Math.min(maxK, num(v.validToK));
  }
  if (minK === -Infinity && maxK === Infinity) return undefined;
  return { minK: minK === -Infinity ? 0 : minK, maxK };
}

/** The 0 K Varshni fit (Eg(0), α, β) of a valley at a composition, or null when one of the three is missing. */
export function varshniFitOf(values: readonly CheckValue[], valley: Valley, composition: string | null): VarshniFit | null {
  const eg0 = findCheckValue(values, "eg", { valley, temperatureK: null, composition });
  const alpha = findCheckValue(values, "varshni_alpha", { valley, temperatureK: null, composition });
  const beta = findCheckValue(values, "varshni_beta", { valley, temperatureK: null, composition });
  if (!eg0 || !alpha || !beta) return null;
  const range = fittedRange([eg0, alpha, beta]);
  return {
    eg0, alpha, beta, range,
    parameters: { eg0Ev: num(eg0.value!), alphaMevPerK: num(alpha.value!), betaK: num(beta.value!), fittedRangeK: range },
  };
}

function missingVarshni(values: readonly CheckValue[], valley: Valley, composition: string | null): string[] {
  const missing: string[] = [];
  if (!findCheckValue(values, "eg", { valley, temperatureK: null, composition })) missing.push(`Eg(${valleyLabel(valley)}, 0 K)`);
  if (!findCheckValue(values, "varshni_alpha", { valley, temperatureK: null, composition })) missing.push(`α(${valleyLabel(valley)})`);
  if (!findCheckValue(values, "varshni_beta", { valley, temperatureK: null, composition })) missing.push(`β(${valleyLabel(valley)})`);
  return missing;
}

function checkVarshni(ctx: Context, notRun: NotRun): CheckResult[] {
  const { subject } = ctx;
  const fitPart = ["varshni_alpha", "varshni_beta"].includes(subject.quantityKey) || (subject.quantityKey === "eg" && subject.temperatureK === null);
  const statedGap = subject.quantityKey === "eg" && subject.temperatureK !== null;
  if ((!fitPart && !statedGap) || subject.valley === null || subject.value === null) return [];
  const fit = varshniFitOf(ctx.values, subject.valley, subject.composition);
  if (!fit) {
    if (statedGap) {
      const missing = missingVarshni(ctx.values, subject.valley, subject.composition);
      // A gap with no fit at all is common (a handbook value); say so only when part of a fit exists.
      if (missing.length < 3) notRun.push({ kind: "varshni", reason: `The 0 K fit of ${ctx.inputs.material.key} is incomplete: ${missing.join(", ")} missing.` });
    } else {
      notRun.push({ kind: "varshni", reason: `The 0 K fit needs ${missingVarshni(ctx.values, subject.valley, subject.composition).join(", ")} as well.` });
    }
    return [];
  }
  const stated = statedGap
    ? [subject]
    : ctx.values.filter((v) => v.quantityKey === "eg" && v.valley === subject.valley && v.temperatureK !== null && v.value !== null && sameDecimal(v.composition, subject.composition));
  if (stated.length === 0) {
    notRun.push({ kind: "varshni", reason: `No gap of ${ctx.inputs.material.key} at ${valleyLabel(subject.valley)} is stated at a temperature to compare the fit with.` });
    return [];
  }
  const toleranceEv = toleranceOf(ctx.inputs, "eg");
  return stated
    .slice()
    .sort((a, b) => num(a.temperatureK!) - num(b.temperatureK!))
    .map((gap) => {
      const t = keyOf(gap.temperatureK!);
      const r = baseResult(`varshni:${subject.valley}:${t}`, "varshni", `Varshni fit at ${t} K`, "Eg(T) = Eg(0) − αT²/(T + β)", "Varshni (1967)");
      r.inputs.push(inputOf(ctx, fit.eg0), inputOf(ctx, fit.alpha), inputOf(ctx, fit.beta), inputOf(ctx, gap));
      r.stated = figure(`stated ${symbolOf(ctx.inputs, gap)}`, gap.value!, "eV");
      r.tolerance = figure("absolute", toleranceEv, "eV");
      if (fit.range) r.notes.push(`Fit range ${fit.range.minK}–${fit.range.maxK} K.`);
      return attempt(r, () => {
        const result = varshniGap(fit.parameters, num(gap.temperatureK!));
        const residual = num(gap.value!) - result.valueEv;
        r.computed.push(figure(`0 K fit at ${t} K`, result.valueEv, "eV"));
        r.residual = figure("stated − fit", residual, "eV");
        // Strict (no warn band): a stated gap and the fit are two statements of one number; see docs/decisions/002.
        r.status = Math.abs(residual) <= toleranceEv ? "pass" : "fail";
        if (result.warning) {
          r.notes.push(`${result.warning}: the fit does not vouch for this temperature.`);
          if (r.status === "pass") r.status = "warn";
        }
      });
    });
}

export const varshniCheck: ConsistencyCheck = { kind: "varshni", title: "Varshni fit", run: checkVarshni };

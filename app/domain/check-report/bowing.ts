import { bowedGapAtTemperature, verdictFromResidual } from "../physics";
import { attempt, baseResult, figure, findCheckValue, inputOf, keyOf, num, symbolOf, temperatureLabel, toleranceOf, valleyLabel, type ConsistencyCheck, type Context, type NotRun } from "./shared";
import type { CheckResult } from "./types";
import { varshniFitOf } from "./varshni";

// An alloy's gap at a composition against quadratic bowing between its end members, moved to temperature by Varshni.
function checkBowing(ctx: Context, notRun: NotRun): CheckResult[] {
  const { subject, inputs } = ctx;
  if (inputs.material.kind !== "alloy" || subject.value === null || subject.valley === null) return [];
  const bowingPart = subject.quantityKey === "eg_bowing_c0" || subject.quantityKey === "eg_bowing_c1";
  const gapAtX = subject.quantityKey === "eg" && subject.composition !== null;
  if (!bowingPart && !gapAtX) return [];
  const valley = subject.valley;
  const ends = inputs.endMembers;
  const c0 = findCheckValue(ctx.values, "eg_bowing_c0", { valley });
  const c1 = findCheckValue(ctx.values, "eg_bowing_c1", { valley });
  const fitA = ends ? varshniFitOf(ends.a.values, valley, null) : null;
  const fitB = ends ? varshniFitOf(ends.b.values, valley, null) : null;
  const missing = [
    !c0 && `C0(${valleyLabel(valley)})`,
    !ends && "its end members",
    ends && !fitA && `the 0 K fit of ${ends.a.material.key} at ${valleyLabel(valley)}`,
    ends && !fitB && `the 0 K fit of ${ends.b.material.key} at ${valleyLabel(valley)}`,
  ].filter((m): m is string => Boolean(m));
  if (missing.length) {
    notRun.push({ kind: "bowing", reason: `The bowing check of ${inputs.material.key} needs ${missing.join(", ")}.` });
    return [];
  }
  const gaps = gapAtX
    ? [subject]
    : ctx.values.filter((v) => v.quantityKey === "eg" && v.valley === valley && v.composition !== null && v.value !== null);
  if (gaps.length === 0) {
    notRun.push({ kind: "bowing", reason: `No gap of ${inputs.material.key} at ${valleyLabel(valley)} is stated at a composition to compare the bowing with.` });
    return [];
  }
  const toleranceEv = toleranceOf(inputs, "eg");
  return gaps.map((gap) => {
    const x = keyOf(gap.composition!);
    const temperatureK = gap.temperatureK === null ? 0 : num(gap.temperatureK);
    const r = baseResult(
      `bowing:${valley}:${x}:${temperatureK}`,
      "bowing",
      `Bowing at x = ${x}, ${temperatureLabel(gap.temperatureK)}`,
      "Eg(x) = x·Eg(A) + (1 − x)·Eg(B) − x(1 − x)·(C0 + C1·x), end points by Varshni at T",
      "Vurgaftman, Meyer & Ram-Mohan (2001); Varshni (1967)",
    );
    r.inputs.push(inputOf(ctx, gap));
    for (const [end, fit] of [[ends!.a.material, fitA!], [ends!.b.material, fitB!]] as const) {
      r.inputs.push(inputOf(ctx, fit.eg0, end), inputOf(ctx, fit.alpha, end), inputOf(ctx, fit.beta, end));
    }
    r.inputs.push(inputOf(ctx, c0!));
    if (c1) r.inputs.push(inputOf(ctx, c1));
    r.stated = figure(`stated ${symbolOf(inputs, gap)}`, gap.value!, "eV");
    r.tolerance = figure("absolute", toleranceEv, "eV");
    if (!c1) r.notes.push("No C1 in the ledger: C = C0.");
    return attempt(r, () => {
      const result = bowedGapAtTemperature({ a: fitA!.parameters, b: fitB!.parameters, c0Ev: num(c0!.value!), c1Ev: c1 ? num(c1.value!) : 0 }, num(x), temperatureK);
      const residual = num(gap.value!) - result.valueEv;
      r.computed.push(figure(`bowing at x = ${x}`, result.valueEv, "eV"));
      r.residual = figure("stated − bowing", residual, "eV");
      r.status = verdictFromResidual(residual, toleranceEv);
      for (const w of result.warnings) r.notes.push(`${w.replace("end point A", ends!.a.material.key).replace("end point B", ends!.b.material.key)}.`);
      if (result.warnings.length && r.status === "pass") r.status = "warn";
    });
  });
}

export const bowingCheck: ConsistencyCheck = { kind: "bowing", title: "Bowing", run: checkBowing };

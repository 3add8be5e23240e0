import { checkKaneMass } from "../physics";
import { attempt, baseResult, figure, findCheckValue, inputOf, num, sameDecimal, symbolOf, temperatureLabel, toleranceOf, type ConsistencyCheck, type Context, type NotRun } from "./shared";
import type { CheckResult } from "./types";

// The stated electron mass at Γ against the Kane formula from Ep, F, Eg and Δso [Kane (1957)].
function checkKane(ctx: Context, notRun: NotRun): CheckResult | null {
  const { subject } = ctx;
  const parts = ["ep", "kane_f", "delta_so", "me"];
  const gapPart = subject.quantityKey === "eg" && subject.valley === "G";
  if ((!parts.includes(subject.quantityKey) && !gapPart) || subject.value === null) return null;
  const x = subject.composition;
  const mass =
    subject.quantityKey === "me"
      ? subject
      : gapPart
        ? findCheckValue(ctx.values, "me", { valley: "G", temperatureK: subject.temperatureK, composition: x })
        : findCheckValue(ctx.values, "me", { valley: "G", temperatureK: null, composition: x }) ??
          ctx.values.find((v) => v.quantityKey === "me" && v.value !== null && sameDecimal(v.composition, x)) ??
          null;
  // A gap takes part only as the gap at the mass's temperature (Eg(0) for a 0 K mass).
  if (gapPart && !mass) return null;
  const gap = mass ? findCheckValue(ctx.values, "eg", { valley: "G", temperatureK: mass.temperatureK, composition: x }) : null;
  if (gapPart && gap !== subject) return null;
  const ep = findCheckValue(ctx.values, "ep", { composition: x });
  const f = findCheckValue(ctx.values, "kane_f", { composition: x });
  const delta = findCheckValue(ctx.values, "delta_so", { composition: x });
  const missing = [
    !ep && "Ep", !f && "F", !delta && "Δso", !mass && "m*e(Γ)",
    mass && !gap && `Eg(Γ, ${temperatureLabel(mass.temperatureK)})`,
  ].filter((m): m is string => Boolean(m));
  if (missing.length) {
    // Only a mass or a Kane parameter invites the check; say what is missing once some of the set exists.
    if (missing.length < 4) notRun.push({ kind: "kane", reason: `The Kane check needs ${missing.join(", ")} of ${ctx.inputs.material.key} as well.` });
    return null;
  }
  const relativeTolerance = toleranceOf(ctx.inputs, "me");
  const r = baseResult("kane", "kane", "Kane mass", "m0/m* = 1 + 2F + Ep(Eg + 2Δso/3)/(Eg(Eg + Δso))", "Kane (1957)");
  r.inputs.push(inputOf(ctx, ep!), inputOf(ctx, f!), inputOf(ctx, gap!), inputOf(ctx, delta!), inputOf(ctx, mass!));
  return attempt(r, () => {
    const check = checkKaneMass({ epEv: num(ep!.value!), f: num(f!.value!), egEv: num(gap!.value!), deltaSoEv: num(delta!.value!), statedMassM0: num(mass!.value!), relativeTolerance });
    r.status = check.verdict;
    r.stated = figure(`stated ${symbolOf(ctx.inputs, mass!)}`, mass!.value!, "m0");
    if (check.massM0 !== null) {
      r.computed.push(figure("Kane m*", check.massM0, "m0"), figure("m0/m*", check.inverseMass, ""));
      r.residual = figure("(stated − Kane)/Kane", check.relativeResidual!, "");
    } else {
      r.computed.push(figure("m0/m*", check.inverseMass, ""));
      r.notes.push("These parameters give a non-positive m0/m*: no mass follows from them.");
    }
    r.tolerance = figure("relative", relativeTolerance, "");
  });
}

export const kaneCheck: ConsistencyCheck = { kind: "kane", title: "Kane mass", run: checkKane };

import { checkNfeGap } from "../physics";
import { attempt, baseResult, dec, figure, findCheckValue, inputOf, isNumber, num, temperatureLabel, toleranceOf, type ConsistencyCheck, type Context, type NotRun } from "./shared";
import type { CheckResult, CheckValue, NfeDetail } from "./types";

// A gap stated with potential coefficients U_n against the central equation (docs/decisions/001).
function checkNfe(ctx: Context, notRun: NotRun): CheckResult | null {
  const { subject } = ctx;
  const coefficients = subject.potentialCoefficients ?? [];
  if (subject.quantityKey !== "eg" || coefficients.length === 0 || subject.value === null) return null;
  let periodAngstrom = isNumber(subject.periodAngstrom) ? subject.periodAngstrom : null;
  let periodFrom: NfeDetail["periodFrom"] = "revision";
  let lattice: CheckValue | null = null;
  if (periodAngstrom === null) {
    lattice =
      findCheckValue(ctx.values, "lattice_a", { temperatureK: subject.temperatureK, composition: subject.composition }) ??
      findCheckValue(ctx.values, "lattice_a", { temperatureK: "300", composition: subject.composition });
    if (!lattice) {
      notRun.push({ kind: "nfe", reason: `No period stated with the coefficients, and no lattice constant a of ${ctx.inputs.material.key} at ${temperatureLabel(subject.temperatureK ?? "300")} in the ledger.` });
      return null;
    }
    periodAngstrom = lattice.value!;
    periodFrom = "lattice constant";
  }
  const toleranceEv = toleranceOf(ctx.inputs, "eg");
  const r = baseResult(
    "nfe",
    "nfe",
    "Nearly-free-electron gap",
    "central equation: H_mm′ = (ħ²/2m)(k − mG)² δ_mm′ + U_(m′−m), G = 2π/a, at k = π/a; first order: Eg ≈ 2|U_1|",
    "Kittel ch. 7; Ashcroft & Mermin ch. 9",
  );
  r.inputs.push(inputOf(ctx, subject));
  for (const c of coefficients) {
    r.inputs.push({ symbol: `U_${c.n}`, value: c.valueEv, unit: "eV", recordId: subject.recordId, revisionId: subject.revisionId, from: "subject", material: null, sourceLabel: subject.sourceLabel });
  }
  if (lattice) r.inputs.push(inputOf(ctx, lattice));
  else r.inputs.push({ symbol: "a (period)", value: periodAngstrom, unit: "Å", recordId: subject.recordId, revisionId: subject.revisionId, from: "subject", material: null, sourceLabel: subject.sourceLabel });
  r.inputs.push({ symbol: "m (band mass)", value: "1", unit: "m0", recordId: null, revisionId: null, from: "default", material: null, sourceLabel: null });
  return attempt(r, () => {
    const check = checkNfeGap({
      periodAngstrom: num(periodAngstrom),
      coefficients: coefficients.map((c) => ({ n: c.n, energyEv: num(c.valueEv) })),
      gapIndex: 1,
      statedGapEv: num(subject.value!),
      toleranceEv,
    });
    const central = check.centralEquation;
    r.status = check.verdict;
    r.stated = figure("stated gap", subject.value!, "eV");
    r.computed.push(
      figure("first order 2|U_1|", check.firstOrder.gapEv, "eV"),
      figure(`central equation (${central.planeWaves} plane waves${central.converged ? "" : ", not converged"})`, central.gapEv, "eV"),
    );
    r.residual = check.residualEv === null ? null : figure("stated − central equation", check.residualEv, "eV");
    r.tolerance = figure("absolute", toleranceEv, "eV");
    r.notes.push(...check.notes);
    if (periodFrom === "lattice constant") r.notes.push(`No period was stated with the coefficients: the lattice constant a of ${ctx.inputs.material.key} was used.`);
    r.nfe = {
      periodAngstrom: periodAngstrom!,
      periodFrom,
      massM0: "1",
      gapIndex: check.gapIndex,
      kPiOverA: check.kPiOverA,
      coefficients: coefficients.map((c) => ({ n: c.n, valueEv: c.valueEv })),
      firstOrder: { gapEv: dec(check.firstOrder.gapEv), lowerEv: dec(check.firstOrder.lowerEv), upperEv: dec(check.firstOrder.upperEv) },
      centralEquation: {
        gapEv: dec(central.gapEv),
        lowerEv: dec(central.lowerEv),
        upperEv: dec(central.upperEv),
        planeWaves: central.planeWaves,
        converged: central.converged,
      },
    };
  });
}

export const nfeCheck: ConsistencyCheck = { kind: "nfe", title: "Nearly-free-electron gap", run: checkNfe };

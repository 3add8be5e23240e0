import { toDecimalString } from "../../domain/decimal";
import { type FourierCoefficient, type NfeCheck, PhysicsInputError, checkNfeGap } from "../../domain/physics";
import { LENGTH_ANGSTROM, convertToCanonical } from "../../domain/units";
import { type Command, UsageError } from "../command";
import { type Values, noPositionals, optionalNumber, parseNumber, parseOptions, requiredNumber } from "../args";
import { printJson, printTable } from "../output";

const usage = `usage: bandledger nfe --period A [--period-unit angstrom|nm] --coefficient n:U [--coefficient n:U …]
                     [--gap n] [--mass m] [--stated Eg [--tolerance eV]] [--json]

Nearly-free-electron check (central equation, one dimension) of a stated gap.
  --period        lattice period a (Å unless --period-unit nm)
  --coefficient   Fourier coefficient U_n in eV as n:U, for U(x) = Σ U_n e^{inGx}, U_-n = U_n
                  (a potential U0·cos(nGx) has U_n = U0/2)
  --gap           gap between bands n and n+1 (k = π/a for odd n, 0 for even n); default 1
  --mass          band mass in m0; default 1
  --stated        the stated gap in eV, checked against the central equation
  --tolerance     eV; default 0.01 (pass ≤ tol, warn ≤ 3·tol, fail beyond)
  --json          print JSON instead of a table
Exit 0 converged, 2 wrong arguments (or a period or mass too small for double precision), 4 not converged within
the plane-wave cap: the numbers are printed, but they are the last basis's, not a converged result.`;

/** The central equation hit the plane-wave cap before it converged: the printed gap is not a converged result. */
export const EXIT_NOT_CONVERGED = 4;

// The physics names the input it refuses ("period", "mass"); the command line names the option.
function runCheck(input: Parameters<typeof checkNfeGap>[0]): NfeCheck {
  try {
    return checkNfeGap(input);
  } catch (e) {
    if (e instanceof PhysicsInputError) throw new UsageError(`--${e.field}: ${e.message}`);
    throw e;
  }
}

const options = {
  period: { type: "string" },
  "period-unit": { type: "string" },
  coefficient: { type: "string", multiple: true },
  gap: { type: "string" },
  mass: { type: "string" },
  stated: { type: "string" },
  tolerance: { type: "string" },
  json: { type: "boolean" },
  help: { type: "boolean", short: "h" },
} as const;

function parseCoefficient(text: string): FourierCoefficient {
  const match = /^\s*(\d+)\s*:\s*(\S+)\s*$/.exec(text);
  if (!match) throw new UsageError(`--coefficient must be n:U, e.g. 1:0.5 (got "${text}")`);
  const n = Number(match[1]);
  if (n < 1) throw new UsageError(`--coefficient order n must be 1 or more (got "${text}")`);
  return { n, energyEv: parseNumber(match[2], `--coefficient ${n}`) };
}

function parsePeriodAngstrom(values: Values): number {
  const unit = (values["period-unit"] as string | undefined) ?? "angstrom";
  if (unit !== "angstrom" && unit !== "nm") throw new UsageError(`--period-unit must be angstrom or nm (got "${unit}")`);
  const periodAngstrom = requiredNumber(values, "period", { positive: true });
  if (unit === "angstrom") return periodAngstrom;
  const converted = convertToCanonical(String(values.period), "nm", LENGTH_ANGSTROM);
  if (!converted.ok) throw new UsageError(`--period: ${converted.message}`);
  return Number(converted.value.canonical);
}

export const nfeCommand: Command = {
  name: "nfe",
  summary: "nearly-free-electron check of a gap from its potential coefficients",
  usage,
  run(args, io) {
    const { values, positionals } = parseOptions(args, options);
    if (values.help) {
      io.stdout(`${usage}\n`);
      return 0;
    }
    noPositionals(positionals);
    const periodAngstrom = parsePeriodAngstrom(values);
    const texts = (values.coefficient as string[] | undefined) ?? [];
    if (texts.length === 0) throw new UsageError("--coefficient is required (n:U, e.g. 1:0.5)");
    const coefficients = texts.map(parseCoefficient);
    const duplicate = coefficients.find((c, i) => coefficients.findIndex((d) => d.n === c.n) !== i);
    if (duplicate) throw new UsageError(`--coefficient ${duplicate.n} is given twice`);
    const gapIndex = parseGapIndex(values.gap as string | undefined);
    const massM0 = optionalNumber(values, "mass", 1, { positive: true });
    const statedGapEv = optionalNumber(values, "stated", null, { min: 0 });
    const toleranceEv = optionalNumber(values, "tolerance", 0.01, { positive: true });
    if (values.tolerance !== undefined && statedGapEv === null) throw new UsageError("--tolerance needs --stated");

    const check = runCheck({ periodAngstrom, coefficients, gapIndex, massM0, statedGapEv, toleranceEv });
    const { firstOrder, centralEquation: central } = check;
    const exitCode = central.converged ? 0 : EXIT_NOT_CONVERGED;
    if (values.json) {
      printJson(io, {
        gap: gapIndex,
        firstOrder: { gapEv: toDecimalString(firstOrder.gapEv) },
        centralEquation: {
          gapEv: toDecimalString(central.gapEv),
          lowerEv: toDecimalString(central.lowerEv),
          upperEv: toDecimalString(central.upperEv),
          planeWaves: central.planeWaves,
          converged: central.converged,
        },
        verdict: check.verdict,
      });
      for (const note of check.notes) io.stderr(`note: ${note}\n`);
      return exitCode;
    }
    io.stdout(
      `Nearly-free-electron check, gap ${gapIndex} at k = ${check.kPiOverA === 1 ? "π/a" : "0"}` +
        ` (a = ${periodAngstrom} Å, m = ${massM0} m0; energies from U_0 = 0)\n`,
    );
    printTable(io, [
      [`first-order gap 2|U_${gapIndex}|`, toDecimalString(firstOrder.gapEv), "eV"],
      ["central-equation gap", toDecimalString(central.gapEv), "eV"],
      ["  lower edge", toDecimalString(central.lowerEv), "eV"],
      ["  upper edge", toDecimalString(central.upperEv), "eV"],
      ["  plane waves", String(central.planeWaves), central.converged ? "" : "(not converged)"],
      ...(check.statedGapEv === null || check.residualEv === null
        ? []
        : ([
            ["stated gap", String(check.statedGapEv), "eV"],
            ["residual (stated − central)", toDecimalString(check.residualEv), "eV"],
            ["tolerance", String(check.toleranceEv), "eV"],
          ] as const)),
      ["verdict", check.verdict],
    ]);
    for (const note of check.notes) io.stdout(`note: ${note}\n`);
    return exitCode;
  },
};

function parseGapIndex(text: string | undefined): number {
  if (text === undefined) return 1;
  if (!/^\s*\d+\s*$/.test(text) || Number(text) < 1) throw new UsageError(`--gap must be a whole number ≥ 1 (got "${text}")`);
  return Number(text);
}

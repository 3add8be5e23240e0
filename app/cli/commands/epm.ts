import { toDecimalString } from "../../domain/decimal";
import {
  ANTISYMMETRIC_FORM_FACTOR_KEYS,
  type CrystalStructure,
  DEFAULT_EPM_TOLERANCE_EV,
  FORM_FACTOR_KEYS,
  type FormFactorKey,
  type FormFactors,
  GAP_POINTS,
  GAP_POINT_VALLEY,
  type GapPoint,
  SYMMETRIC_FORM_FACTOR_KEYS,
  checkPseudopotential,
  rydbergToEv,
} from "../../domain/physics";
import { LENGTH_ANGSTROM, convertToCanonical } from "../../domain/units";
import { type Values, noPositionals, optionalNumber, parseNumber, parseOptions, requiredNumber } from "../args";
import { type Command, UsageError } from "../command";
import { type Row, printJson, printTable } from "../output";

const usage = `usage: bandledger epm --structure diamond|zincblende --lattice a [--lattice-unit angstrom|nm]
                     --form-factor S3:V --form-factor S8:V --form-factor S11:V [--form-factor A3:V …]
                     [--form-factor-unit ry|ev] [--stated-gamma eV] [--stated-x eV] [--stated-l eV]
                     [--tolerance eV] [--json]

Pseudopotential check (the central equation in three dimensions, fcc plane waves) of the gaps at Γ, X and L.
  --structure         diamond (one kind of atom) or zincblende (two)
  --lattice           cubic lattice constant a (Å unless --lattice-unit nm)
  --form-factor       key:value; S3, S8, S11 (symmetric, all three required) and, for zinc blende,
                      A3, A4, A11 (antisymmetric; a missing one is zero); the number is |G|² in (2π/a)²
  --form-factor-unit  ry (default) or ev; 1 Ry = 13.605693122994 eV (CODATA 2018)
  --stated-gamma, --stated-x, --stated-l
                      stated gaps in eV: Eg(Γ) = E5(Γ) − E4(Γ), Eg(X) = E5(X) − E4(Γ), Eg(L) = E5(L) − E4(Γ)
  --tolerance         eV; default ${DEFAULT_EPM_TOLERANCE_EV} (pass ≤ tol, warn ≤ 3·tol, fail beyond)
  --json              print JSON instead of a table
A three-form-factor local model reproduces the main gaps to about 0.1–0.3 eV: use it to check consistency,
not in place of measured values.`;

const options = {
  structure: { type: "string" },
  lattice: { type: "string" },
  "lattice-unit": { type: "string" },
  "form-factor": { type: "string", multiple: true },
  "form-factor-unit": { type: "string" },
  "stated-gamma": { type: "string" },
  "stated-x": { type: "string" },
  "stated-l": { type: "string" },
  tolerance: { type: "string" },
  json: { type: "boolean" },
  help: { type: "boolean", short: "h" },
} as const;

const STATED_OPTION: Record<GapPoint, string> = { gamma: "stated-gamma", x: "stated-x", l: "stated-l" };

function parseStructure(values: Values): CrystalStructure {
  const text = values.structure as string | undefined;
  if (text === undefined) throw new UsageError("--structure is required (diamond or zincblende)");
  if (text !== "diamond" && text !== "zincblende") throw new UsageError(`--structure must be diamond or zincblende (got "${text}")`);
  return text;
}

function parseLatticeAngstrom(values: Values): number {
  const unit = (values["lattice-unit"] as string | undefined) ?? "angstrom";
  if (unit !== "angstrom" && unit !== "nm") throw new UsageError(`--lattice-unit must be angstrom or nm (got "${unit}")`);
  const lattice = requiredNumber(values, "lattice", { positive: true });
  if (unit === "angstrom") return lattice;
  const converted = convertToCanonical(String(values.lattice), "nm", LENGTH_ANGSTROM);
  if (!converted.ok) throw new UsageError(`--lattice: ${converted.message}`);
  return Number(converted.value.canonical);
}

function parseFormFactors(values: Values, structure: CrystalStructure): FormFactors {
  const unit = (values["form-factor-unit"] as string | undefined) ?? "ry";
  if (unit !== "ry" && unit !== "ev") throw new UsageError(`--form-factor-unit must be ry or ev (got "${unit}")`);
  const texts = (values["form-factor"] as string[] | undefined) ?? [];
  const formFactors: FormFactors = {};
  for (const text of texts) {
    const match = /^\s*([A-Za-z]+\d+)\s*:\s*(\S+)\s*$/.exec(text);
    if (!match) throw new UsageError(`--form-factor must be key:value, e.g. S3:-0.21 (got "${text}")`);
    const key = match[1].toUpperCase();
    if (!(FORM_FACTOR_KEYS as readonly string[]).includes(key)) {
      throw new UsageError(`--form-factor ${match[1]}: unknown key (use ${FORM_FACTOR_KEYS.join(", ")})`);
    }
    const formFactorKey = key as FormFactorKey;
    if (formFactors[formFactorKey] !== undefined) throw new UsageError(`--form-factor ${key} is given twice`);
    if (structure === "diamond" && ANTISYMMETRIC_FORM_FACTOR_KEYS.includes(formFactorKey)) {
      throw new UsageError(`--form-factor ${key}: antisymmetric form factors need --structure zincblende (diamond has one kind of atom)`);
    }
    const value = parseNumber(match[2], `--form-factor ${key}`);
    formFactors[formFactorKey] = unit === "ry" ? rydbergToEv(value) : value;
  }
  for (const key of SYMMETRIC_FORM_FACTOR_KEYS) {
    if (formFactors[key] === undefined) throw new UsageError(`--form-factor ${key} is required (${key}:value in ${unit === "ry" ? "Ry" : "eV"})`);
  }
  return formFactors;
}

const decimal = (value: number) => toDecimalString(value);

export const epmCommand: Command = {
  name: "epm",
  summary: "pseudopotential check of the gaps at Γ, X and L from form factors",
  usage,
  run(args, io) {
    const { values, positionals } = parseOptions(args, options);
    if (values.help) {
      io.stdout(`${usage}\n`);
      return 0;
    }
    noPositionals(positionals);
    const structure = parseStructure(values);
    const latticeAngstrom = parseLatticeAngstrom(values);
    const formFactorsEv = parseFormFactors(values, structure);
    const stated: Partial<Record<GapPoint, number | null>> = {};
    for (const point of GAP_POINTS) stated[point] = optionalNumber(values, STATED_OPTION[point], null, { min: 0 });
    const anyStated = GAP_POINTS.some((point) => stated[point] !== null);
    const toleranceEv = optionalNumber(values, "tolerance", DEFAULT_EPM_TOLERANCE_EV, { positive: true });
    if (values.tolerance !== undefined && !anyStated) throw new UsageError("--tolerance needs --stated-gamma, --stated-x or --stated-l");

    const check = checkPseudopotential({ structure, latticeAngstrom, formFactorsEv, stated, toleranceEv });
    if (values.json) {
      const gap = (point: GapPoint) => {
        const result = check.gaps[point];
        return {
          gapEv: decimal(result.gapEv),
          ...(result.statedEv === null || result.residualEv === null
            ? {}
            : { statedEv: String(result.statedEv), residualEv: decimal(result.residualEv), verdict: result.verdict }),
        };
      };
      printJson(io, {
        gamma: gap("gamma"),
        x: { ...gap("x"), gammaXMinimum: { gapEv: decimal(check.gammaXMinimum.gapEv), fraction: decimal(check.gammaXMinimum.fraction) } },
        l: gap("l"),
        fundamental: { gapEv: decimal(check.fundamental.gapEv), valley: check.fundamental.valley },
        planeWaves: check.planeWaves,
        verdict: check.verdict,
      });
      for (const note of check.notes) io.stderr(`note: ${note}\n`);
      return 0;
    }
    io.stdout(
      `Pseudopotential check, ${structure === "diamond" ? "diamond" : "zinc blende"}, a = ${latticeAngstrom} Å` +
        ` (gaps from the valence maximum E4(Γ); bands numbered from 1)\n`,
    );
    const rows: Row[] = [];
    for (const point of GAP_POINTS) {
      const result = check.gaps[point];
      const valley = GAP_POINT_VALLEY[point];
      rows.push([`Eg(${valley}) = E5(${valley}) − E4(Γ)`, decimal(result.gapEv), "eV"]);
      if (result.statedEv !== null && result.residualEv !== null) {
        rows.push([`  stated`, String(result.statedEv), "eV"]);
        rows.push([`  residual (stated − computed)`, decimal(result.residualEv), "eV"]);
        rows.push([`  verdict`, result.verdict]);
      }
    }
    rows.push(
      ["lowest conduction energy along Γ–X", decimal(check.gammaXMinimum.gapEv), "eV"],
      ["  at (fraction of Γ–X)", check.gammaXMinimum.fraction.toFixed(3)],
      [`fundamental gap (${check.fundamental.valley})`, decimal(check.fundamental.gapEv), "eV"],
      ["plane waves", String(check.planeWaves), `|G|² ≤ ${check.maxSquare}${check.converged ? "" : " (not converged)"}`],
    );
    if (anyStated) rows.push(["tolerance", String(check.toleranceEv), "eV"]);
    rows.push(["verdict", check.verdict]);
    printTable(io, rows);
    for (const note of check.notes) io.stdout(`note: ${note}\n`);
    io.stdout("note: a three-form-factor local model reproduces the main gaps to about 0.1–0.3 eV; it checks consistency, it does not replace measured values\n");
    return 0;
  },
};

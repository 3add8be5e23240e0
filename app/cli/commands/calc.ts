import { toDecimalString } from "../../domain/decimal";
import { bowedGapEv, kaneInverseMass, kaneMassM0, varshniGap, vegardLatticeAngstrom } from "../../domain/physics";
import { type Command, type Io, UsageError } from "../command";
import { type Values, noPositionals, optionalNumber, parseOptions, requiredNumber } from "../args";
import { type Row, printJson, printTable } from "../output";

interface Calculation {
  usage: string;
  flags: string[];
  compute: (values: Values) => { json: Record<string, string>; formula: string; rows: Row[] };
}

const fraction = { min: 0, max: 1 };

const calculations: Record<string, Calculation> = {
  varshni: {
    usage: "calc varshni --eg0 eV --alpha meV/K --beta K --temperature K [--json]",
    flags: ["eg0", "alpha", "beta", "temperature"],
    compute(values) {
      const eg0Ev = requiredNumber(values, "eg0");
      const alphaMevPerK = requiredNumber(values, "alpha");
      const betaK = requiredNumber(values, "beta");
      const temperatureK = requiredNumber(values, "temperature", { min: 0 });
      if (!(temperatureK + betaK > 0)) throw new UsageError("--beta plus --temperature must be positive");
      const { valueEv } = varshniGap({ eg0Ev, alphaMevPerK, betaK }, temperatureK);
      return {
        json: { valueEv: toDecimalString(valueEv) },
        formula: "Eg(T) = Eg(0) − αT²/(T + β)   [Varshni 1967]",
        rows: [
          ["Eg(0)", String(eg0Ev), "eV"],
          ["α", String(alphaMevPerK), "meV/K"],
          ["β", String(betaK), "K"],
          ["T", String(temperatureK), "K"],
          ["Eg(T)", toDecimalString(valueEv), "eV"],
        ],
      };
    },
  },
  bowing: {
    usage: "calc bowing --eg-a eV --eg-b eV --c0 eV [--c1 eV] --x fraction-of-A [--json]",
    flags: ["eg-a", "eg-b", "c0", "c1", "x"],
    compute(values) {
      const egAEv = requiredNumber(values, "eg-a");
      const egBEv = requiredNumber(values, "eg-b");
      const c0Ev = requiredNumber(values, "c0");
      const c1Ev = optionalNumber(values, "c1", 0);
      const x = requiredNumber(values, "x", fraction);
      const valueEv = bowedGapEv({ egAEv, egBEv, c0Ev, c1Ev }, x);
      return {
        json: { valueEv: toDecimalString(valueEv) },
        formula: "Eg(x) = x·Eg(A) + (1 − x)·Eg(B) − x(1 − x)·(C0 + C1·x),  x = fraction of A",
        rows: [
          ["Eg(A)", String(egAEv), "eV"],
          ["Eg(B)", String(egBEv), "eV"],
          ["C0", String(c0Ev), "eV"],
          ["C1", String(c1Ev), "eV"],
          ["x", String(x)],
          ["Eg(x)", toDecimalString(valueEv), "eV"],
        ],
      };
    },
  },
  kane: {
    usage: "calc kane --ep eV --f F --eg eV --delta eV [--json]",
    flags: ["ep", "f", "eg", "delta"],
    compute(values) {
      const epEv = requiredNumber(values, "ep");
      const f = requiredNumber(values, "f");
      const egEv = requiredNumber(values, "eg", { positive: true });
      const deltaSoEv = requiredNumber(values, "delta", { min: 0 });
      const parameters = { epEv, f, egEv, deltaSoEv };
      const inverse = kaneInverseMass(parameters);
      if (!(inverse > 0)) throw new UsageError(`these --ep, --f, --eg, --delta give m0/m* = ${inverse}, not a positive mass`);
      const massM0 = kaneMassM0(parameters);
      return {
        json: { massM0: toDecimalString(massM0) },
        formula: "m0/m* = 1 + 2F + Ep(Eg + 2Δso/3)/(Eg(Eg + Δso))   [Kane 1957]",
        rows: [
          ["Ep", String(epEv), "eV"],
          ["F", String(f)],
          ["Eg", String(egEv), "eV"],
          ["Δso", String(deltaSoEv), "eV"],
          ["m0/m*", toDecimalString(inverse)],
          ["m*", toDecimalString(massM0), "m0"],
        ],
      };
    },
  },
  vegard: {
    usage: "calc vegard --a-a Å --a-b Å --x fraction-of-A [--json]",
    flags: ["a-a", "a-b", "x"],
    compute(values) {
      const aAAngstrom = requiredNumber(values, "a-a", { positive: true });
      const aBAngstrom = requiredNumber(values, "a-b", { positive: true });
      const x = requiredNumber(values, "x", fraction);
      const valueAngstrom = vegardLatticeAngstrom({ aAAngstrom, aBAngstrom }, x);
      return {
        json: { valueAngstrom: toDecimalString(valueAngstrom) },
        formula: "a(x) = x·a(A) + (1 − x)·a(B)   [Vegard 1921],  x = fraction of A",
        rows: [
          ["a(A)", String(aAAngstrom), "Å"],
          ["a(B)", String(aBAngstrom), "Å"],
          ["x", String(x)],
          ["a(x)", toDecimalString(valueAngstrom), "Å"],
        ],
      };
    },
  },
};

const usage = [
  "usage: bandledger calc <calculation> … [--json]",
  "",
  ...Object.values(calculations).map((c) => `  bandledger ${c.usage}`),
  "",
  "Alloys are A(x)B(1−x): x is the fraction of A. Negative values may follow their flag (--c0 -0.127).",
].join("\n");

function run(args: string[], io: Io): number {
  const [name, ...rest] = args;
  if (name === undefined) throw new UsageError(`calc needs a calculation: ${Object.keys(calculations).join(", ")}`);
  if (name === "--help" || name === "-h") {
    io.stdout(`${usage}\n`);
    return 0;
  }
  const calculation = Object.hasOwn(calculations, name) ? calculations[name] : undefined;
  if (!calculation) throw new UsageError(`unknown calculation "${name}" (try ${Object.keys(calculations).join(", ")})`);
  const options = Object.fromEntries([
    ...calculation.flags.map((flag) => [flag, { type: "string" as const }]),
    ["json", { type: "boolean" as const }],
    ["help", { type: "boolean" as const, short: "h" }],
  ]);
  let result: ReturnType<Calculation["compute"]>;
  let json = false;
  try {
    const { values, positionals } = parseOptions(rest, options);
    if (values.help) {
      io.stdout(`usage: bandledger ${calculation.usage}\n`);
      return 0;
    }
    noPositionals(positionals);
    json = values.json === true;
    result = calculation.compute(values);
  } catch (error) {
    if (error instanceof UsageError) throw new UsageError(`${name}: ${error.message}`);
    throw error;
  }
  if (json) {
    printJson(io, result.json);
  } else {
    io.stdout(`${result.formula}\n`);
    printTable(io, result.rows);
  }
  return 0;
}

export const calcCommand: Command = {
  name: "calc",
  summary: "one formula at a time: varshni, bowing, kane, vegard",
  usage,
  run,
};

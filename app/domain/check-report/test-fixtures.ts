import { buildCheckReport } from "./report";
import { QUANTITIES } from "../quantities";
import type { CheckQuantity, CheckReportInputs, CheckValue } from "./types";

// Fixtures of the check tests, and the sources of their values (each test file names the ones it uses):
//   [V01]    I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89(11), 5815 (2001), doi:10.1063/1.1368156
//            (table values from memory).
//   [Kane57] E. O. Kane, J. Phys. Chem. Solids 1, 249 (1957).   [Var67] Y. P. Varshni, Physica 34, 149 (1967).
//   [Kittel] C. Kittel, Introduction to Solid State Physics, 8th ed., ch. 7 (two-band gap 2|U_G|, the U0·cos trap).
//   calc: computed from the listed inputs with the formula named.

export const QUANTITY_ROWS: CheckQuantity[] = QUANTITIES.map((q) => ({
  key: q.key, symbol: q.symbol, name: q.name, canonicalUnit: q.canonicalUnit, rangeMin: q.rangeMin, rangeMax: q.rangeMax, checkTolerance: q.checkTolerance ?? null,
}));

let nextId = 1;
export function value(quantityKey: string, v: string, unit: string, c: Partial<CheckValue> = {}): CheckValue {
  const id = nextId++;
  return {
    quantityKey, value: v, unit, valley: null, temperatureK: null, composition: null, recordId: id, revisionId: 1000 + id, sourceLabel: "Vurgaftman et al. 2001",
    validFromK: null, validToK: null, ...c,
  };
}

// GaAs [V01], from memory.
export const gaas = {
  eg0: value("eg", "1.519", "eV", { valley: "G", validFromK: "0", validToK: "400" }),
  alpha: value("varshni_alpha", "0.5405", "meV/K", { valley: "G" }),
  beta: value("varshni_beta", "204", "K", { valley: "G" }),
  eg300: value("eg", "1.4225", "eV", { valley: "G", temperatureK: "300.000" }),
  me: value("me", "0.067", "m0", { valley: "G" }),
  ep: value("ep", "28.8", "eV"),
  f: value("kane_f", "-1.94", "1"),
  delta: value("delta_so", "0.341", "eV"),
  a: value("lattice_a", "5.65325", "Å", { temperatureK: "300" }),
};
export const gaasValues = Object.values(gaas);
export const GAAS = { key: "GaAs", name: "Gallium arsenide", kind: "binary" as const };

export function report(subject: CheckValue, extra: Partial<CheckReportInputs> = {}) {
  return buildCheckReport({ origin: "record", material: GAAS, subject, values: gaasValues, quantities: QUANTITY_ROWS, ...extra });
}

export const result = (r: ReturnType<typeof report>, kind: string) => r.results.find((x) => x.kind === kind);

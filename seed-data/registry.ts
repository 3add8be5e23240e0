import { eq, sql } from "drizzle-orm";
import type { Db } from "~/.server/db/client";
import { materialFamilies, materials, users } from "~/.server/db/schema";
import { syncQuantities, quantityIdsByKey } from "~/.server/registry/catalogue";
import { appendRevision, createRecordWithRevision, findRecordId, retireRecord, type AppendedRevision } from "~/.server/registry/records";
import { ensureSource } from "~/.server/registry/sources";
import { conditionKey, quantityByKey, validateConditions, type Valley } from "~/domain/quantities";
import type { Method, SourceInput } from "~/domain/registry-schemas";
import { TEAM_DOMAIN } from "./team";

// The demo registry of Kestrel Devices (an invented team). Published values carry their source; values recalled
// rather than read from the paper say "from memory" in their notes. KD-* reports are invented for the demo.

export const DEMO_SOURCES = {
  V01: {
    kind: "bibtex",
    bibtex: `@article{Vurgaftman2001,
  author  = {Vurgaftman, I. and Meyer, J. R. and Ram-Mohan, L. R.},
  title   = {Band parameters for {III--V} compound semiconductors and their alloys},
  journal = {Journal of Applied Physics},
  volume  = {89},
  number  = {11},
  pages   = {5815--5875},
  year    = {2001},
  doi     = {10.1063/1.1368156}
}`,
  },
  SzeNg: {
    kind: "bibtex",
    bibtex: `@book{SzeNg2007,
  author    = {Sze, S. M. and Ng, Kwok K.},
  title     = {Physics of Semiconductor Devices},
  edition   = {3rd},
  publisher = {Wiley},
  address   = {Hoboken, NJ},
  year      = {2007}
}`,
  },
  CODATA18: {
    kind: "doi",
    doi: "10.1103/RevModPhys.93.025010",
    title: "CODATA recommended values of the fundamental physical constants: 2018",
    authors: "E. Tiesinga, P. J. Mohr, D. B. Newell, B. N. Taylor",
    year: 2021,
  },
  CB66: {
    kind: "bibtex",
    bibtex: `@article{CohenBergstresser1966,
  author  = {Cohen, Marvin L. and Bergstresser, T. K.},
  title   = {Band Structures and Pseudopotential Form Factors for Fourteen Semiconductors of the Diamond and Zinc-Blende Structures},
  journal = {Physical Review},
  volume  = {141},
  number  = {2},
  pages   = {789--796},
  year    = {1966},
  doi     = {10.1103/PhysRev.141.789}
}`,
  },
  "KD-SIM-2025-007": {
    kind: "report",
    reportNumber: "KD-SIM-2025-007",
    title: "Parameters of the legacy HEMT simulation deck, as found (Kestrel Devices internal)",
    authors: "T. Okafor",
    year: 2025,
  },
  "KD-EPI-2026-009": {
    kind: "report",
    reportNumber: "KD-EPI-2026-009",
    title: "Room-temperature photoluminescence of MBE Al(0.3)Ga(0.7)As calibration layer, single spot (Kestrel Devices internal)",
    authors: "M. Tanaka",
    year: 2026,
  },
  "KD-EPI-2026-014": {
    kind: "report",
    reportNumber: "KD-EPI-2026-014",
    title: "Room-temperature photoluminescence maps of MBE Al(0.3)Ga(0.7)As calibration wafers K1423–K1425 (Kestrel Devices internal)",
    authors: "M. Tanaka, T. Okafor",
    year: 2026,
  },
} satisfies Record<string, SourceInput>;

type SourceKey = keyof typeof DEMO_SOURCES;
type Person = "tomas.okafor" | "mei.tanaka" | "ravi.menon" | "hanna.lindqvist";

type DemoRevision = {
  value: string;
  unit: string;
  uncertainty?: string;
  method: Method;
  source: SourceKey;
  locator: string;
  notes: string;
  by: Person;
  approver: Person;
  /** Day of approval; the proposal is dated one day earlier. */
  on: string;
  potentialCoefficients?: { n: number; value: string }[];
  periodAngstrom?: string;
  validFromK?: string;
  validToK?: string;
};

type DemoRecord = {
  material: string;
  quantity: string;
  temperatureK?: string;
  valley?: Valley;
  composition?: string;
  history: DemoRevision[];
  retire?: { reason: string; by: Person; approver: Person; on: string };
};

export const DEMO_MATERIALS = [
  { key: "GaAs", name: "Gallium arsenide", formula: "GaAs", kind: "binary", structure: "zinc_blende", family: "arsenides", description: "Substrate and channel material of the team's HEMT and laser work." },
  { key: "AlAs", name: "Aluminium arsenide", formula: "AlAs", kind: "binary", structure: "zinc_blende", family: "arsenides", description: "End member of AlGaAs barriers." },
  { key: "InAs", name: "Indium arsenide", formula: "InAs", kind: "binary", structure: "zinc_blende", family: "arsenides", description: "End member of InGaAs channels." },
  { key: "InP", name: "Indium phosphide", formula: "InP", kind: "binary", structure: "zinc_blende", family: "phosphides", description: "Substrate of lattice-matched InGaAs." },
  { key: "GaP", name: "Gallium phosphide", formula: "GaP", kind: "binary", structure: "zinc_blende", family: "phosphides", description: "Indirect-gap phosphide." },
  { key: "GaSb", name: "Gallium antimonide", formula: "GaSb", kind: "binary", structure: "zinc_blende", family: "antimonides", description: "Substrate for mid-infrared structures." },
  { key: "Si", name: "Silicon", formula: "Si", kind: "element", structure: "diamond", family: "group-iv", description: "Reference crystal and carrier wafer." },
  { key: "Ge", name: "Germanium", formula: "Ge", kind: "element", structure: "diamond", family: "group-iv", description: "Group-IV element with its gap at L." },
  { key: "GaN", name: "Gallium nitride (wurtzite)", formula: "GaN", kind: "binary", structure: "wurtzite", family: "nitrides", description: "Wurtzite GaN of the power-device work." },
  { key: "AlGaAs", name: "Aluminium gallium arsenide", formula: "Al(x)Ga(1-x)As", kind: "alloy", structure: "zinc_blende", family: "arsenides", compositionVariable: "x", a: "AlAs", b: "GaAs", description: "Barrier alloy; x is the AlAs fraction." },
  { key: "InGaAs", name: "Indium gallium arsenide", formula: "In(x)Ga(1-x)As", kind: "alloy", structure: "zinc_blende", family: "arsenides", compositionVariable: "x", a: "InAs", b: "GaAs", description: "Channel alloy; x is the InAs fraction." },
] as const;

const V01_NOTE = "[V01] value from memory; check it against the paper's table before relying on it.";

function v01(material: string, quantity: string, value: string, unit: string, extra: Partial<DemoRecord> & { on?: string; approver?: Person; by?: Person; locator?: string; notes?: string; revision?: Partial<DemoRevision> } = {}): DemoRecord {
  const { on, approver, by, locator, notes, revision, ...conditions } = extra;
  return {
    material,
    quantity,
    ...conditions,
    history: [{
      value, unit, method: "compilation", source: "V01",
      locator: locator ?? `${material} parameter table`,
      notes: notes ?? V01_NOTE,
      by: by ?? "tomas.okafor",
      approver: approver ?? "ravi.menon",
      on: on ?? "2025-09-18",
      ...revision,
    }],
  };
}

// Local pseudopotential form factors of [CB66] in Ry, with the lattice constant they were fitted with (Å). The
// table values and its number are from memory; the pseudopotential check uses the registry's own a.
const CB66_FORM_FACTORS: { material: string; fittedA: string; ry: Record<string, string>; approver: Person }[] = [
  { material: "Si", fittedA: "5.43", ry: { ff_vs3: "-0.21", ff_vs8: "0.04", ff_vs11: "0.08" }, approver: "hanna.lindqvist" },
  { material: "Ge", fittedA: "5.66", ry: { ff_vs3: "-0.23", ff_vs8: "0.01", ff_vs11: "0.06" }, approver: "hanna.lindqvist" },
  { material: "GaAs", fittedA: "5.64", ry: { ff_vs3: "-0.23", ff_vs8: "0.01", ff_vs11: "0.06", ff_va3: "0.07", ff_va4: "0.05", ff_va11: "0.01" }, approver: "ravi.menon" },
  { material: "InAs", fittedA: "6.04", ry: { ff_vs3: "-0.22", ff_vs8: "0.00", ff_vs11: "0.05", ff_va3: "0.08", ff_va4: "0.05", ff_va11: "0.03" }, approver: "ravi.menon" },
  { material: "InP", fittedA: "5.86", ry: { ff_vs3: "-0.23", ff_vs8: "0.01", ff_vs11: "0.06", ff_va3: "0.07", ff_va4: "0.05", ff_va11: "0.01" }, approver: "hanna.lindqvist" },
  { material: "GaP", fittedA: "5.44", ry: { ff_vs3: "-0.22", ff_vs8: "0.03", ff_vs11: "0.07", ff_va3: "0.12", ff_va4: "0.07", ff_va11: "0.02" }, approver: "hanna.lindqvist" },
  { material: "GaSb", fittedA: "6.12", ry: { ff_vs3: "-0.22", ff_vs8: "0.00", ff_vs11: "0.05", ff_va3: "0.06", ff_va4: "0.05", ff_va11: "0.01" }, approver: "ravi.menon" },
];

const CB66_RECORDS: DemoRecord[] = CB66_FORM_FACTORS.flatMap(({ material, fittedA, ry, approver }) =>
  Object.entries(ry).map(([quantity, value]): DemoRecord => ({
    material,
    quantity,
    history: [{
      value, unit: "Ry", method: "fitted", source: "CB66",
      locator: `Table I, form factors (Ry) and lattice constants; ${material} fitted with a = ${fittedA} Å`,
      notes: `[CB66] local form factor, fitted to optical transitions; value and table number from memory, check them against the paper. Typed in Ry, stored exactly in eV (1 Ry = 13.605693122994 eV). The authors fitted with a = ${fittedA} Å.`,
      by: "mei.tanaka", approver, on: "2026-02-24",
    }],
  })),
);

const TEAM_FIT_RANGE = "The 0–400 K range is the team's rule for using this fit; the recalled [V01] table states none.";

export const DEMO_RECORDS: DemoRecord[] = [
  // GaAs Γ gap at 300 K: a handbook value, replaced by the Varshni value of [V01], then restated with the model potential for the NFE check.
  {
    material: "GaAs", quantity: "eg", valley: "G", temperatureK: "300",
    history: [
      { value: "1.424", unit: "eV", method: "compilation", source: "SzeNg", locator: "Appendix table of semiconductor properties at 300 K", notes: "Handbook room-temperature gap, from memory.", by: "tomas.okafor", approver: "ravi.menon", on: "2025-09-16" },
      { value: "1.4225", unit: "eV", method: "calculated", source: "V01", locator: "GaAs parameter table: Eg(0) = 1.519 eV, α = 0.5405 meV/K, β = 204 K", notes: "Varshni with the [V01] parameters gives 1.4224821 eV at 300 K, kept to five digits, so the 300 K gap agrees with the 0 K fit the simulations use. [V01] values from memory.", by: "mei.tanaka", approver: "hanna.lindqvist", on: "2025-11-05" },
      { value: "1.4225", unit: "eV", method: "calculated", source: "V01", locator: "GaAs parameter table; period a(300 K) = 5.65325 Å", notes: "Same gap, now stated with the coefficients of the team's one-dimensional model potential for the nearly-free-electron check (2|U_1| equals the gap at first order). The coefficients are a Kestrel modelling convention, not a published value.", by: "tomas.okafor", approver: "ravi.menon", on: "2026-01-14", potentialCoefficients: [{ n: 1, value: "0.71125" }, { n: 2, value: "0.0250" }], periodAngstrom: "5.65325" },
    ],
  },
  v01("GaAs", "eg", "1.519", "eV", { valley: "G", revision: { validFromK: "0", validToK: "400", notes: `${V01_NOTE} ${TEAM_FIT_RANGE}` } }),
  v01("GaAs", "varshni_alpha", "540.5", "µeV/K", { valley: "G", revision: { validFromK: "0", validToK: "400", notes: `Typed in µeV/K rather than the paper's meV/K so that the demo shows an exact unit conversion: stored as 0.5405 meV/K. ${V01_NOTE} ${TEAM_FIT_RANGE}` } }),
  v01("GaAs", "varshni_beta", "204", "K", { valley: "G", revision: { validFromK: "0", validToK: "400", notes: `${V01_NOTE} ${TEAM_FIT_RANGE}` } }),
  v01("GaAs", "eg", "1.981", "eV", { valley: "X" }),
  v01("GaAs", "varshni_alpha", "0.460", "meV/K", { valley: "X" }),
  v01("GaAs", "varshni_beta", "204", "K", { valley: "X" }),
  v01("GaAs", "eg", "1.815", "eV", { valley: "L" }),
  v01("GaAs", "varshni_alpha", "0.605", "meV/K", { valley: "L" }),
  v01("GaAs", "varshni_beta", "204", "K", { valley: "L" }),
  {
    material: "GaAs", quantity: "eg", valley: "G", temperatureK: "77",
    history: [{ value: "1.5076", unit: "eV", method: "calculated", source: "V01", locator: "GaAs parameter table: Eg(0) = 1.519 eV, α = 0.5405 meV/K, β = 204 K", notes: "Varshni with the [V01] parameters gives 1.507596 eV at 77 K (liquid-nitrogen measurements). [V01] values from memory.", by: "mei.tanaka", approver: "hanna.lindqvist", on: "2025-11-05" }],
  },
  v01("GaAs", "me", "0.067", "m0", { valley: "G" }),
  v01("GaAs", "luttinger_g1", "6.98", ""),
  v01("GaAs", "luttinger_g2", "2.06", ""),
  v01("GaAs", "luttinger_g3", "2.93", ""),
  {
    material: "GaAs", quantity: "lattice_a", temperatureK: "300",
    history: [
      { value: "5.6533", unit: "Å", method: "compilation", source: "SzeNg", locator: "Appendix table of semiconductor properties at 300 K", notes: "Handbook value, from memory.", by: "tomas.okafor", approver: "ravi.menon", on: "2025-09-16" },
      { value: "0.565325", unit: "nm", method: "compilation", source: "V01", locator: "GaAs parameter table", notes: `Typed in nm rather than the paper's Å so that the demo shows an exact unit conversion: stored as 5.65325 Å, one more digit than the handbook value. ${V01_NOTE}`, by: "mei.tanaka", approver: "hanna.lindqvist", on: "2025-10-02" },
    ],
  },
  {
    material: "GaAs", quantity: "lattice_a", temperatureK: "295",
    history: [{ value: "5.6533", unit: "Å", method: "compilation", source: "KD-SIM-2025-007", locator: "deck sheet 'materials', row 4", notes: "Copied from the legacy simulation deck, which labels it 295 K without a source; it matches the handbook's 300 K value.", by: "tomas.okafor", approver: "ravi.menon", on: "2025-09-12" }],
    retire: { reason: "Retired: the deck mislabels the 300 K handbook value as 295 K. Use a(300 K) with da/dT instead.", by: "mei.tanaka", approver: "ravi.menon", on: "2025-10-03" },
  },
  v01("GaAs", "lattice_dadt", "3.88e-5", "Å/K"),
  v01("GaAs", "delta_so", "0.341", "eV"),
  v01("GaAs", "ep", "28.8", "eV"),
  v01("GaAs", "kane_f", "-1.94", ""),
  v01("GaAs", "vbo", "-0.80", "eV", { revision: { notes: `Valence-band maximum on the common scale of [V01] (InSb = 0). ${V01_NOTE}` } }),

  v01("AlAs", "lattice_a", "5.6611", "Å", { temperatureK: "300" }),
  v01("AlAs", "eg", "3.099", "eV", { valley: "G" }),
  v01("AlAs", "varshni_alpha", "0.885", "meV/K", { valley: "G" }),
  v01("AlAs", "varshni_beta", "530", "K", { valley: "G" }),
  v01("AlAs", "eg", "2.24", "eV", { valley: "X" }),
  v01("AlAs", "varshni_alpha", "0.70", "meV/K", { valley: "X" }),
  v01("AlAs", "varshni_beta", "530", "K", { valley: "X" }),
  v01("AlAs", "me", "0.15", "m0", { valley: "G" }),
  v01("AlAs", "delta_so", "0.28", "eV"),

  v01("InAs", "lattice_a", "6.0583", "Å", { temperatureK: "300" }),
  v01("InAs", "eg", "0.417", "eV", { valley: "G" }),
  v01("InAs", "varshni_alpha", "0.276", "meV/K", { valley: "G" }),
  v01("InAs", "varshni_beta", "93", "K", { valley: "G" }),
  v01("InAs", "me", "0.026", "m0", { valley: "G" }),
  v01("InAs", "delta_so", "0.39", "eV"),
  v01("InAs", "ep", "21.5", "eV"),
  v01("InAs", "kane_f", "-2.90", ""),
  v01("InAs", "luttinger_g1", "20.0", ""),
  v01("InAs", "luttinger_g2", "8.5", ""),
  v01("InAs", "luttinger_g3", "9.2", ""),

  v01("InP", "lattice_a", "5.8697", "Å", { temperatureK: "300", approver: "hanna.lindqvist" }),
  v01("InP", "eg", "1.4236", "eV", { valley: "G", approver: "hanna.lindqvist" }),
  v01("InP", "varshni_alpha", "0.363", "meV/K", { valley: "G", approver: "hanna.lindqvist" }),
  v01("InP", "varshni_beta", "162", "K", { valley: "G", approver: "hanna.lindqvist" }),
  v01("InP", "me", "0.0795", "m0", { valley: "G", approver: "hanna.lindqvist" }),
  v01("InP", "delta_so", "0.108", "eV", { approver: "hanna.lindqvist" }),
  v01("InP", "ep", "20.7", "eV", { approver: "hanna.lindqvist" }),
  v01("InP", "kane_f", "-1.31", "", { approver: "hanna.lindqvist" }),

  v01("GaP", "lattice_a", "5.4505", "Å", { temperatureK: "300", approver: "hanna.lindqvist" }),
  v01("GaP", "eg", "2.886", "eV", { valley: "G", approver: "hanna.lindqvist" }),
  v01("GaP", "eg", "2.35", "eV", { valley: "X", approver: "hanna.lindqvist" }),
  v01("GaP", "me", "0.13", "m0", { valley: "G", approver: "hanna.lindqvist" }),
  v01("GaP", "delta_so", "0.08", "eV", { approver: "hanna.lindqvist" }),
  v01("GaP", "ep", "31.4", "eV", { approver: "hanna.lindqvist" }),
  v01("GaP", "kane_f", "-2.04", "", { approver: "hanna.lindqvist" }),

  v01("GaSb", "lattice_a", "6.0959", "Å", { temperatureK: "300" }),
  v01("GaSb", "eg", "0.812", "eV", { valley: "G" }),
  v01("GaSb", "varshni_alpha", "0.417", "meV/K", { valley: "G" }),
  v01("GaSb", "varshni_beta", "140", "K", { valley: "G" }),
  v01("GaSb", "me", "0.039", "m0", { valley: "G" }),
  v01("GaSb", "delta_so", "0.76", "eV"),
  v01("GaSb", "ep", "27.0", "eV"),
  v01("GaSb", "kane_f", "-1.63", ""),

  v01("GaN", "lattice_a", "3.189", "Å", { temperatureK: "300", approver: "hanna.lindqvist", locator: "wurtzite GaN parameter table" }),
  v01("GaN", "lattice_c", "5.185", "Å", { temperatureK: "300", approver: "hanna.lindqvist", locator: "wurtzite GaN parameter table" }),
  v01("GaN", "eg", "3.510", "eV", { valley: "G", approver: "hanna.lindqvist", locator: "wurtzite GaN parameter table" }),
  v01("GaN", "varshni_alpha", "0.909", "meV/K", { valley: "G", approver: "hanna.lindqvist", locator: "wurtzite GaN parameter table" }),
  v01("GaN", "varshni_beta", "830", "K", { valley: "G", approver: "hanna.lindqvist", locator: "wurtzite GaN parameter table" }),
  v01("GaN", "me", "0.20", "m0", { valley: "G", approver: "hanna.lindqvist", locator: "wurtzite GaN parameter table" }),

  {
    material: "Si", quantity: "lattice_a", temperatureK: "295.65",
    history: [{ value: "5.431020511", unit: "Å", method: "compilation", source: "CODATA18", locator: "lattice parameter of silicon, a (22.5 °C, in vacuum)", notes: "Recommended value 5.431020511e-10 m at 22.5 °C (295.65 K) in vacuum.", by: "mei.tanaka", approver: "hanna.lindqvist", on: "2025-10-20" }],
  },
  {
    material: "Si", quantity: "eg", valley: "X", temperatureK: "300",
    history: [{ value: "1.12", unit: "eV", method: "compilation", source: "SzeNg", locator: "Appendix table of semiconductor properties at 300 K", notes: "Indirect gap; the conduction-band minimum lies on the Γ–X line near X. Handbook value, from memory.", by: "mei.tanaka", approver: "hanna.lindqvist", on: "2025-10-20" }],
  },
  {
    material: "Ge", quantity: "lattice_a", temperatureK: "300",
    history: [{ value: "5.64613", unit: "Å", method: "compilation", source: "SzeNg", locator: "Appendix table of semiconductor properties at 300 K", notes: "Handbook value, from memory.", by: "mei.tanaka", approver: "hanna.lindqvist", on: "2025-10-20" }],
  },
  {
    material: "Ge", quantity: "eg", valley: "L", temperatureK: "300",
    history: [{ value: "0.66", unit: "eV", method: "compilation", source: "SzeNg", locator: "Appendix table of semiconductor properties at 300 K", notes: "Indirect gap at L. Handbook value, from memory.", by: "mei.tanaka", approver: "hanna.lindqvist", on: "2025-10-20" }],
  },

  v01("AlGaAs", "eg_bowing_c0", "-0.127", "eV", { valley: "G", locator: "AlGaAs bowing: C = −0.127 + 1.310x eV", notes: `With x the AlAs fraction: Eg(x) = x·Eg(AlAs) + (1 − x)·Eg(GaAs) − x(1 − x)·(C0 + C1·x); shift the end points with Varshni first. ${V01_NOTE}`, on: "2025-09-25" }),
  v01("AlGaAs", "eg_bowing_c1", "1.310", "eV", { valley: "G", locator: "AlGaAs bowing: C = −0.127 + 1.310x eV", on: "2025-09-25" }),
  {
    material: "AlGaAs", quantity: "eg", valley: "G", temperatureK: "300", composition: "0.3",
    history: [
      { value: "1.836", unit: "eV", uncertainty: "0.005", method: "measured", source: "KD-EPI-2026-009", locator: "Fig. 2, spot C", notes: "Room-temperature PL peak of one spot of calibration layer K1419; composition from the growth-rate calibration.", by: "mei.tanaka", approver: "ravi.menon", on: "2026-01-22" },
      { value: "1838", unit: "meV", uncertainty: "3", method: "measured", source: "KD-EPI-2026-014", locator: "Table 2, mean of three wafer maps", notes: "Mean PL peak over wafers K1423–K1425 (x = 0.300 ± 0.005 by X-ray diffraction); replaces the single-spot value.", by: "mei.tanaka", approver: "hanna.lindqvist", on: "2026-02-10" },
    ],
  },
  v01("InGaAs", "eg_bowing_c0", "0.477", "eV", { valley: "G", locator: "InGaAs bowing of the Γ gap", on: "2025-09-25" }),
  ...CB66_RECORDS,
];

function at(day: string, hour = 10): Date {
  return new Date(`${day}T${String(hour).padStart(2, "0")}:00:00.000Z`);
}

function dayBefore(day: string): Date {
  return new Date(at(day).getTime() - 86_400_000);
}

/** Loads the demo registry: quantities, materials, sources, records with their histories. Idempotent by natural keys. */
export async function loadRegistry(d: Db): Promise<void> {
  await syncQuantities(d);
  const families = new Map((await d.select().from(materialFamilies)).map((f) => [f.key, f.id]));
  for (const m of DEMO_MATERIALS) {
    const familyId = families.get(m.family);
    if (!familyId) throw new Error(`family ${m.family} is missing: load the team first`);
    await d
      .insert(materials)
      .values({ key: m.key, name: m.name, formula: m.formula, kind: m.kind, structure: m.structure, familyId, description: m.description })
      .onDuplicateKeyUpdate({ set: { key: sql`\`key\`` } });
  }
  const materialRows = await d.select().from(materials);
  const materialId = new Map(materialRows.map((m) => [m.key, m.id]));
  for (const m of DEMO_MATERIALS) {
    if (!("a" in m)) continue;
    await d
      .update(materials)
      .set({ compositionVariable: m.compositionVariable, endMemberAId: materialId.get(m.a)!, endMemberBId: materialId.get(m.b)! })
      .where(eq(materials.key, m.key));
  }
  const people = new Map<string, number>();
  for (const u of await d.select({ id: users.id, email: users.email }).from(users)) people.set(u.email, u.id);
  const person = (p: Person) => {
    const id = people.get(`${p}@${TEAM_DOMAIN}`);
    if (!id) throw new Error(`demo person ${p} is missing: load the team first`);
    return id;
  };
  const author = person("tomas.okafor");
  const sourceId = new Map<SourceKey, number>();
  for (const [key, input] of Object.entries(DEMO_SOURCES) as [SourceKey, SourceInput][]) {
    sourceId.set(key, await ensureSource(d, input, author));
  }
  const quantityId = await quantityIdsByKey(d);
  for (const r of DEMO_RECORDS) {
    const q = quantityByKey(r.quantity)!;
    const mId = materialId.get(r.material)!;
    const kind = materialRows.find((m) => m.id === mId)?.kind ?? "binary";
    const checked = validateConditions(q, kind, { temperatureK: r.temperatureK, valley: r.valley, composition: r.composition });
    if (!checked.ok) throw new Error(`demo record ${r.material}/${r.quantity}: ${JSON.stringify(checked.errors)}`);
    const key = conditionKey(q, checked.conditions);
    if ((await findRecordId(d, { materialId: mId, quantityId: quantityId.get(r.quantity)!, conditionKey: key })) !== null) continue;
    await d.transaction(async (tx) => {
      let current: number | null = null;
      let recordId = 0;
      for (const [i, h] of r.history.entries()) {
        const revision = {
          value: h.value, unit: h.unit, uncertainty: h.uncertainty, method: h.method, sourceId: sourceId.get(h.source)!,
          locator: h.locator, notes: h.notes, potentialCoefficients: h.potentialCoefficients, periodAngstrom: h.periodAngstrom,
          validFromK: h.validFromK, validToK: h.validToK,
        };
        const approval = { proposedBy: person(h.by), approvedBy: person(h.approver), proposedAt: dayBefore(h.on), approvedAt: at(h.on) };
        const done: AppendedRevision = i === 0
          ? await createRecordWithRevision(tx, { materialId: mId, quantityId: quantityId.get(r.quantity)!, conditions: checked.conditions, revision, ...approval })
          : await appendRevision(tx, { recordId, baseRevisionId: current, revision, ...approval });
        recordId = done.recordId;
        current = done.revisionId;
      }
      if (r.retire) {
        await retireRecord(tx, {
          recordId, baseRevisionId: current!, reason: r.retire.reason,
          proposedBy: person(r.retire.by), approvedBy: person(r.retire.approver), proposedAt: dayBefore(r.retire.on), approvedAt: at(r.retire.on),
        });
      }
    });
  }
}

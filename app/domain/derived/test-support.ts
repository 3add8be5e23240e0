import { create, all } from "mathjs";
import type { ReleaseContent, ReleaseItem } from "../release-format";

// Test inputs: the [V01] values (I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), table
// values from memory) written as items of a frozen release, and a seeded normal sampler for Monte Carlo checks.

let nextId = 1;

export function item(material: [key: string, formula: string], quantity: string, value: string, unit: string, extra: Partial<ReleaseItem> = {}): ReleaseItem {
  const id = nextId++;
  return {
    recordId: id, revisionId: 1000 + id, revisionSeq: 1,
    material: { key: material[0], name: material[0], formula: material[1] },
    quantity: { key: quantity, symbol: quantity, name: quantity },
    value, unit, uncertainty: null, temperatureK: null, temperatureKind: "independent", valley: null, composition: null, validFromK: null, validToK: null,
    method: "compilation", source: { kind: "doi", doi: "10.1063/1.1368156", bibtexKey: null, reportNumber: null, title: "Band parameters for III–V compound semiconductors and their alloys", authors: null, year: 2001 },
    locator: null, notes: null, approvedAt: null,
    ...extra,
  };
}

const fit0 = (valley: "G" | "X" | "L", extra: Partial<ReleaseItem> = {}): Partial<ReleaseItem> => ({ valley, temperatureKind: "fit0", ...extra });
const at300: Partial<ReleaseItem> = { temperatureK: "300", temperatureKind: "stated" };

const GaAs: [string, string] = ["GaAs", "GaAs"];
const AlAs: [string, string] = ["AlAs", "AlAs"];
const InAs: [string, string] = ["InAs", "InAs"];
const InP: [string, string] = ["InP", "InP"];
const AlGaAs: [string, string] = ["AlGaAs", "Al(x)Ga(1-x)As"];
const InGaAs: [string, string] = ["InGaAs", "In(x)Ga(1-x)As"];

/** A release holding the [V01] GaAs, AlAs, InAs and InP values and the AlGaAs and InGaAs Γ bowing. */
export function v01Release(uncertainties: Partial<Record<string, string>> = {}): ReleaseContent {
  nextId = 1;
  const u = (k: string) => ({ uncertainty: uncertainties[k] ?? null });
  const items: ReleaseItem[] = [
    item(GaAs, "eg", "1.519", "eV", fit0("G", { validFromK: "0", validToK: "400", ...u("GaAs.eg0") })),
    item(GaAs, "varshni_alpha", "0.5405", "meV/K", fit0("G", u("GaAs.alpha"))),
    item(GaAs, "varshni_beta", "204", "K", fit0("G", u("GaAs.beta"))),
    item(GaAs, "eg", "1.981", "eV", fit0("X")),
    item(GaAs, "varshni_alpha", "0.460", "meV/K", fit0("X")),
    item(GaAs, "varshni_beta", "204", "K", fit0("X")),
    item(GaAs, "lattice_a", "5.65325", "Å", { ...at300, ...u("GaAs.a") }),
    item(GaAs, "lattice_dadt", "0.0000388", "Å/K"),
    item(GaAs, "delta_so", "0.341", "eV", u("GaAs.delta")),
    item(GaAs, "ep", "28.8", "eV", u("GaAs.ep")),
    item(GaAs, "kane_f", "-1.94", "1", u("GaAs.f")),
    item(GaAs, "me", "0.067", "m0", fit0("G")),
    item(AlAs, "eg", "3.099", "eV", fit0("G", u("AlAs.eg0"))),
    item(AlAs, "varshni_alpha", "0.885", "meV/K", fit0("G", u("AlAs.alpha"))),
    item(AlAs, "varshni_beta", "530", "K", fit0("G", u("AlAs.beta"))),
    item(AlAs, "eg", "2.24", "eV", fit0("X")),
    item(AlAs, "varshni_alpha", "0.70", "meV/K", fit0("X")),
    item(AlAs, "varshni_beta", "530", "K", fit0("X")),
    item(AlAs, "lattice_a", "5.6611", "Å", { ...at300, ...u("AlAs.a") }),
    item(InAs, "eg", "0.417", "eV", fit0("G")),
    item(InAs, "varshni_alpha", "0.276", "meV/K", fit0("G")),
    item(InAs, "varshni_beta", "93", "K", fit0("G")),
    item(InAs, "lattice_a", "6.0583", "Å", { ...at300, ...u("InAs.a") }),
    item(InP, "lattice_a", "5.8697", "Å", { ...at300, ...u("InP.a") }),
    item(AlGaAs, "eg_bowing_c0", "-0.127", "eV", { valley: "G", ...u("AlGaAs.c0") }),
    item(AlGaAs, "eg_bowing_c1", "1.310", "eV", { valley: "G", ...u("AlGaAs.c1") }),
    item(AlGaAs, "eg", "1.838", "eV", { valley: "G", temperatureK: "300", temperatureKind: "stated", composition: "0.3", uncertainty: "0.003", method: "measured" }),
    item(InGaAs, "eg_bowing_c0", "0.477", "eV", { valley: "G" }),
  ];
  return {
    schema: "bandledger.release", schemaVersion: 1,
    set: { slug: "v01-test", name: "V01 test set", purpose: "tests", description: null },
    release: { number: 1, frozenAt: "2026-01-01T00:00:00.000Z", frozenBy: "test", codataEdition: "CODATA 2018", softwareVersion: "0.1.0", itemCount: items.length },
    items,
  };
}

/** Standard normal draws from mathjs's seeded generator (Box–Muller), so a Monte Carlo run is the same every time. */
export function seededNormal(seed: string): () => number {
  const math = create(all, { randomSeed: seed });
  let spare: number | null = null;
  return () => {
    if (spare !== null) {
      const s = spare;
      spare = null;
      return s;
    }
    let u = 0;
    while (u === 0) u = math.random() as number;
    const v = math.random() as number;
    const r = Math.sqrt(-2 * Math.log(u));
    spare = r * Math.sin(2 * Math.PI * v);
    return r * Math.cos(2 * Math.PI * v);
  };
}

/** Sample mean and standard deviation (n − 1). */
export function sampleStats(xs: readonly number[]): { mean: number; sd: number } {
  const mean = xs.reduce((a, b) => a + b, 0) / xs.length;
  const variance = xs.reduce((a, b) => a + (b - mean) ** 2, 0) / (xs.length - 1);
  return { mean, sd: Math.sqrt(variance) };
}

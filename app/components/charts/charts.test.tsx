import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import { bandStructure, bowedGapEv, centralEquationGap, crossoverComposition, formFactorsFromRydberg, nfeBands, planeWaveBasis, varshniGap } from "~/domain/physics";
import { BandStructureChart, CompositionChart, EkChart, TemperatureChart } from "./index";

const count = (markup: string, tag: string) => (markup.match(new RegExp(`<${tag}[\\s>]`, "g")) ?? []).length;

describe("EkChart", () => {
  const potential = { periodAngstrom: 5.65325, coefficients: [{ n: 1, energyEv: 0.3 }] };
  const bands = nfeBands(potential, undefined, { bandCount: 3 });
  const gap = centralEquationGap(potential, 1);

  it("draws one path per band and per free-electron parabola, the gap shaded and labelled", () => {
    const markup = renderToStaticMarkup(<EkChart {...bands} gap={{ ...gap, kPiOverA: 1 }} />);
    expect(markup).toMatch(/^<svg[^>]*role="img"/);
    expect(markup).toContain("wavevector k (π/a)");
    expect(markup).toContain("energy E (eV)");
    expect(count(markup, "path")).toBe(6);
    expect(markup).toContain(`gap ${Number(gap.gapEv.toPrecision(4))} eV`);
    expect(markup).toMatch(/<title[^>]*>Band energies E\(k\)/);
    expect(markup).toMatch(/<desc[^>]*>3 bands/);
    expect(markup).not.toMatch(/#[0-9a-f]{3,6}\b/i);
  });

  it("draws the bands alone without free-electron curves or a gap", () => {
    const markup = renderToStaticMarkup(<EkChart kPiOverA={bands.kPiOverA} bandsEv={bands.bandsEv} />);
    expect(count(markup, "path")).toBe(3);
    expect(markup).not.toContain("gap ");
  });
});

describe("TemperatureChart", () => {
  const temperatures = Array.from({ length: 41 }, (_, i) => i * 10);
  // GaAs [V01]: Γ, X, L Varshni parameters.
  const valleys = [
    { label: "Γ", p: { eg0Ev: 1.519, alphaMevPerK: 0.5405, betaK: 204 } },
    { label: "X", p: { eg0Ev: 1.981, alphaMevPerK: 0.46, betaK: 204 } },
    { label: "L", p: { eg0Ev: 1.815, alphaMevPerK: 0.605, betaK: 204 } },
  ];
  const series = valleys.map(({ label, p }) => ({
    label,
    points: temperatures.map((t) => ({ temperatureK: t, valueEv: varshniGap(p, t).valueEv })),
  }));

  it("draws one path per valley with axis labels, the fitted range and a marker", () => {
    const markup = renderToStaticMarkup(<TemperatureChart series={series} fittedRangeK={{ minK: 4, maxK: 300 }} markerK={300} />);
    expect(markup).toContain("temperature T (K)");
    expect(markup).toContain("band gap Eg (eV)");
    expect(count(markup, "path")).toBe(3);
    expect(count(markup, "circle")).toBe(3);
    expect(markup).toContain("300 K");
    expect(markup).toMatch(/<desc[^>]*>[^<]*fitted range 4–300 K[^<]*Γ 1\.42248/);
  });
});

describe("CompositionChart", () => {
  const xs = Array.from({ length: 21 }, (_, i) => i / 20);
  const gamma = { egAEv: 3.099, egBEv: 1.519, c0Ev: -0.127, c1Ev: 1.31 }; // Al(x)Ga(1−x)As Γ [V01]
  const flat = { egAEv: 2, egBEv: 2, c0Ev: 0 };
  const crossing = crossoverComposition(gamma, flat)!;

  it("draws one path per valley with the crossover and the lattice match marked", () => {
    const markup = renderToStaticMarkup(
      <CompositionChart
        series={[
          { label: "Γ", points: xs.map((x) => ({ x, valueEv: bowedGapEv(gamma, x) })) },
          { label: "X", points: xs.map((x) => ({ x, valueEv: bowedGapEv(flat, x) })) },
        ]}
        compositionLabel="Al fraction x in Al(x)Ga(1−x)As"
        crossover={{ x: crossing, valueEv: 2 }}
        latticeMatch={{ x: 0.3 }}
      />,
    );
    expect(markup).toContain("Al fraction x in Al(x)Ga(1−x)As");
    expect(markup).toContain("band gap Eg (eV)");
    expect(count(markup, "path")).toBe(2);
    expect(markup).toContain(`crossover x = ${Number(crossing.toPrecision(4))}`);
    expect(markup).toContain("lattice match x = 0.3");
  });
});

describe("BandStructureChart", () => {
  // Silicon with the form factors of Cohen & Bergstresser, Phys. Rev. 141, 789 (1966) (from memory), on a small basis.
  const basis = planeWaveBasis({ structure: "diamond", latticeAngstrom: 5.43, formFactorsEv: formFactorsFromRydberg({ S3: -0.21, S8: 0.04, S11: 0.08 }) }, 11);
  const bands = bandStructure(basis, { count: 40 });
  const props = { labels: bands.labels, distance: bands.points.map((p) => p.distance), energiesEv: bands.bandsEv };

  it("draws the eight bands with the symmetry points as the axis, the gap shaded, the checked energies ringed", () => {
    const markup = renderToStaticMarkup(<BandStructureChart {...props} gap={{ gapEv: 0.9, label: "Eg 0.900 eV (Δ)" }} marks={[{ label: "X", distance: bands.labels[2].distance, energyEv: 1.0 }]} title="Silicon bands" />);
    expect(markup).toMatch(/^<svg[^>]*role="img"/);
    expect(count(markup, "path")).toBe(8);
    for (const label of ["L", "Γ", "X", "U|K"]) expect(markup).toContain(`>${label}</text>`);
    expect(markup).toContain("Eg 0.900 eV (Δ)");
    expect(markup).toContain("data-gap");
    expect(count(markup, "circle")).toBe(1);
    expect(markup).toMatch(/<title[^>]*>Silicon bands/);
    expect(markup).toMatch(/<desc[^>]*>8 bands along L–Γ–X–U\|K–Γ/);
    expect(markup).not.toMatch(/#[0-9a-f]{3,6}\b/i);
  });

  it("draws no shading for a gap that is not open", () => {
    const markup = renderToStaticMarkup(<BandStructureChart {...props} gap={{ gapEv: 0, label: "Eg 0 eV" }} />);
    expect(markup).not.toContain("data-gap");
  });
});

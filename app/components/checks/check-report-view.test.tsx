import { renderToStaticMarkup } from "react-dom/server";
import { describe, expect, it } from "vitest";
import { buildCheckReport, type CheckValue } from "~/domain/check-report";
import { QUANTITIES } from "~/domain/quantities";
import { CheckReportView } from "./check-report-view";

// [Kittel] ch. 7: a stated gap 2|U_1| for U_1 = 0.1 eV at a = 5.65325 Å passes; [V01] GaAs Γ fit (from memory).
const quantities = QUANTITIES.map((q) => ({ key: q.key, symbol: q.symbol, name: q.name, canonicalUnit: q.canonicalUnit, rangeMin: q.rangeMin, rangeMax: q.rangeMax, checkTolerance: q.checkTolerance ?? null }));
const base = { valley: "G" as const, composition: null, sourceLabel: "Vurgaftman et al. 2001", validFromK: null, validToK: null };
const value = (quantityKey: string, v: string, unit: string, recordId: number, extra: Partial<CheckValue> = {}): CheckValue => ({
  ...base, quantityKey, value: v, unit, temperatureK: null, recordId, revisionId: recordId * 10, ...extra,
});

const gap = value("eg", "0.2", "eV", 1, { temperatureK: "300", potentialCoefficients: [{ n: 1, valueEv: "0.1" }], periodAngstrom: "5.65325" });
const fit = [value("eg", "1.519", "eV", 2), value("varshni_alpha", "0.5405", "meV/K", 3), value("varshni_beta", "204", "K", 4)];

describe("CheckReportView", () => {
  const report = buildCheckReport({ origin: "record", material: { key: "GaAs", name: "Gallium arsenide", kind: "binary" }, subject: gap, values: fit, quantities });
  const markup = renderToStaticMarkup(<CheckReportView report={report} />);

  it("shows the overall verdict and one item per check with its own verdict", () => {
    // The NFE check passes; the fit gives 1.42248 eV at 300 K, far from the stated 0.2 eV.
    expect(report.status).toBe("fail");
    expect(markup).toContain('data-check-report="fail"');
    expect(markup).toMatch(/data-check="nfe" data-verdict="pass"/);
    expect(markup).toMatch(/data-check="varshni" data-verdict="fail"/);
    expect(markup).toMatch(/data-check="range" data-verdict="pass"/);
  });

  it("links every input to the revision it came from, and draws the E(k) plot beside first order and central equation", () => {
    expect(markup).toContain('href="/records/2"');
    expect(markup).toContain(">rev. 20</a>");
    expect(markup).toContain("first order 2|U_1|");
    expect(markup).toMatch(/<svg[^>]*role="img"/);
    expect(markup).toContain("Constants CODATA 2018");
  });

  it("reads residuals in meV and says where a proposal's own values came from", () => {
    expect(markup).toMatch(/residual <b[^>]*>−1222 meV<\/b>/);
    const proposal = buildCheckReport({ origin: "proposal", material: { key: "GaAs", name: "Gallium arsenide", kind: "binary" }, subject: { ...gap, recordId: null, revisionId: null }, values: fit, quantities });
    expect(renderToStaticMarkup(<CheckReportView report={proposal} plot={false} />)).toContain(`(<span class="text-muted">this proposal</span>)`);
  });

  it("says so plainly when there is no report", () => {
    const empty = renderToStaticMarkup(<CheckReportView report={null} message="Choose the material and the quantity to see the checks." />);
    expect(empty).toContain('data-verdict="none"');
    expect(empty).toContain("Choose the material and the quantity");
  });
});

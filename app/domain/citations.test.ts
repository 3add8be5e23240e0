import { describe, expect, it } from "vitest";
import { doiUrl, formatCslReference, parseDoi, parseReportNumber, sameDoi, shortSourceLabel, type CslItem } from "./citations";

// DOI syntax: "10." + registrant code + "/" + suffix (DOI Handbook §2.2, common practice). The DOIs are those of
// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001) and [CODATA18] Tiesinga et al., Rev. Mod. Phys.
// 93, 025010 (2021); the others only exercise the format.
describe("parseDoi", () => {
  it.each([
    ["10.1063/1.1368156", "10.1063/1.1368156"], // [V01]
    ["doi:10.1063/1.1368156", "10.1063/1.1368156"],
    ["DOI: 10.1063/1.1368156", "10.1063/1.1368156"],
    ["https://doi.org/10.1063/1.1368156", "10.1063/1.1368156"],
    ["http://dx.doi.org/10.1103/RevModPhys.93.025010", "10.1103/RevModPhys.93.025010"], // [CODATA18]
    ["10.1016/0031-8914(67)90062-6", "10.1016/0031-8914(67)90062-6"],
    ["https://doi.org/10.1000/a%2Fb", "10.1000/a/b"],
    ["10.1000.10/123", "10.1000.10/123"],
    ["  10.1063/1.1368156.  ", "10.1063/1.1368156"],
  ])("accepts %j as %s", (raw, doi) => {
    expect(parseDoi(raw)).toEqual({ ok: true, doi });
  });

  it.each(["", "1063/1.1368156", "10.10/abc", "10.1063/", "10.1063 /1.1368156", "10.1063/1.13 68156", "https://example.org/10.1063/1.1368156", "11.1063/1.1368156", "https://doi.org/10.1000/%E0%A4%A"])(
    "refuses %j",
    (raw) => {
      expect(parseDoi(raw).ok).toBe(false);
    },
  );

  it("compares DOIs without regard to case and links them at doi.org", () => {
    expect(sameDoi("10.1103/RevModPhys.93.025010", "10.1103/REVMODPHYS.93.025010")).toBe(true);
    expect(doiUrl("10.1016/0031-8914(67)90062-6")).toBe("https://doi.org/10.1016/0031-8914(67)90062-6");
  });
});

describe("parseReportNumber", () => {
  it.each([["KD-EPI-2026-014", true], ["TR/2025/7", true], ["ab", false], ["KD EPI 14", false], ["", false]])("%j → %s", (raw, ok) => {
    expect(parseReportNumber(raw).ok).toBe(ok);
  });
});

describe("references of our own form", () => {
  const v01: CslItem = {
    type: "article-journal",
    title: "Band parameters for III–V compound semiconductors and their alloys",
    author: [{ given: "I.", family: "Vurgaftman" }, { given: "J. R.", family: "Meyer" }, { given: "L. R.", family: "Ram-Mohan" }],
    "container-title": "Journal of Applied Physics",
    volume: "89",
    issue: "11",
    page: "5815-5875",
    issued: { "date-parts": [[2001]] },
    DOI: "10.1063/1.1368156",
  };

  it("writes one line from CSL-JSON [V01]", () => {
    expect(formatCslReference(v01)).toBe("I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan, Journal of Applied Physics 89, 5815–5875 (2001)");
  });

  it.each([
    [{ kind: "bibtex", title: "Band parameters", authors: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan", year: 2001, doi: null, reportNumber: null }, "Vurgaftman et al. 2001"],
    [{ kind: "bibtex", title: "Physics of Semiconductor Devices", authors: "S. M. Sze, Kwok K. Ng", year: 2007, doi: null, reportNumber: null }, "Sze & Ng 2007"],
    [{ kind: "doi", title: "Temperature dependence of the energy gap in semiconductors", authors: "Y. P. Varshni", year: 1967, doi: "x", reportNumber: null }, "Varshni 1967"],
    [{ kind: "report", title: "PL maps", authors: "M. Tanaka", year: 2026, doi: null, reportNumber: "KD-EPI-2026-014" }, "KD-EPI-2026-014"],
    [{ kind: "doi", title: "A title without authors", authors: null, year: null, doi: "x", reportNumber: null }, "A title without authors"],
  ] as const)("labels %j as %s", (source, label) => {
    expect(shortSourceLabel(source)).toBe(label);
  });
});

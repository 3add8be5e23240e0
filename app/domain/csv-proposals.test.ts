import fc from "fast-check";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import {
  CSV_TEMPLATE_HEADER, checkProposalCsv, csvSafeCell, decodeCsvBytes, describeCsvIssue, detectDelimiter, isFormulaCell, mapCsvHeader,
  proposalCsvTemplate,
} from "./csv-proposals";
import { QUANTITIES } from "./quantities";
import type { ProposalCatalogue } from "./proposal-schemas";

// Values: [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), doi:10.1063/1.1368156 (from memory).
const catalogue: ProposalCatalogue = {
  materials: [
    { id: 1, key: "GaAs", name: "Gallium arsenide", formula: "GaAs", kind: "binary", familyId: 10, familyName: "Arsenides" },
    { id: 2, key: "AlGaAs", name: "Aluminium gallium arsenide", formula: "Al(x)Ga(1-x)As", kind: "alloy", familyId: 10, familyName: "Arsenides" },
  ],
  quantities: QUANTITIES,
};

const enc = (s: string) => new TextEncoder().encode(s);
const HEADER = "material,quantity,temperature_k,valley,composition_x,value,unit,uncertainty,method,source,source_title,locator";
const TITLE = "Band parameters for III-V compound semiconductors and their alloys";
const GOOD = [
  `GaAs,lattice_a,300,,,5.65325,Å,,compilation,10.1063/1.1368156,${TITLE},GaAs table`,
  `AlGaAs,eg_bowing_c0,,G,,-0.127,eV,,compilation,10.1063/1.1368156,${TITLE},AlGaAs section`,
  `GaAs,eg,fit,G,,1519,meV,,compilation,10.1063/1.1368156,${TITLE},GaAs table`,
];

describe("formula cells", () => {
  it("refuses text a spreadsheet would run, and takes signed numbers as values", () => {
    for (const cell of ["=HYPERLINK(\"http://x\",\"y\")", "=1+1", "+A1", "-A1", "@SUM(A1:A2)", "\t=1", "＝1", "-"]) expect(isFormulaCell(cell), cell).toBe(true);
    for (const cell of ["-0.127", "−0.127", "+1.5", "-3.88e-5", "0.1", "eV", "GaAs", "", " =1"]) expect(isFormulaCell(cell), cell).toBe(false);
  });

  it("writes nothing that can run as a formula, while numbers stay numbers", () => {
    expect(csvSafeCell("=HYPERLINK(1)")).toBe("'=HYPERLINK(1)");
    expect(csvSafeCell("-0.127")).toBe("-0.127");
    fc.assert(fc.property(fc.array(fc.string(), { minLength: 1, maxLength: 5 }), (cells) => {
      const written = proposalCsvTemplate([Object.fromEntries(cells.map((c, i) => [CSV_TEMPLATE_HEADER[i], c]))]);
      const back = Papa.parse<string[]>(written, { skipEmptyLines: true }).data;
      return back.every((row) => row.every((c) => !isFormulaCell(c)));
    }));
  });
});

describe("decoding", () => {
  it("drops a UTF-8 byte-order mark and reports it", () => {
    const r = decodeCsvBytes(new Uint8Array([0xef, 0xbb, 0xbf, ...enc("a,b\n")]));
    expect(r).toEqual({ ok: true, text: "a,b\n", hadByteOrderMark: true });
  });

  it("refuses UTF-16 and text that is not UTF-8, naming the byte and the line", () => {
    expect(decodeCsvBytes(new Uint8Array([0xff, 0xfe, 0x61, 0x00]))).toMatchObject({ ok: false, message: expect.stringMatching(/UTF-16/) });
    const latin1 = new Uint8Array([...enc("material,value\nGaAs,"), 0xe9, ...enc("\n")]);
    expect(decodeCsvBytes(latin1)).toEqual({ ok: false, message: "The file is not UTF-8: byte 21 (on line 2) is 0xE9. Save it as “CSV UTF-8” and upload it again." });
  });

  it("agrees with the platform's own strict UTF-8 decoder on any bytes", () => {
    const strict = new TextDecoder("utf-8", { fatal: true, ignoreBOM: true });
    fc.assert(fc.property(fc.uint8Array({ minLength: 1, maxLength: 40 }), (bytes) => {
      if (bytes.includes(0) || (bytes[0] === 0xff && bytes[1] === 0xfe) || (bytes[0] === 0xfe && bytes[1] === 0xff) || (bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf)) return true;
      let valid = true;
      let text = "";
      try {
        text = strict.decode(bytes);
      } catch {
        valid = false;
      }
      const ours = decodeCsvBytes(bytes);
      if (valid && text.trim() === "") return !ours.ok;
      return ours.ok === valid;
    }), { numRuns: 3000 });
  });

  it("refuses an empty file and one over the size limit", () => {
    expect(decodeCsvBytes(new Uint8Array())).toEqual({ ok: false, message: "The file is empty." });
    expect(decodeCsvBytes(enc("a".repeat(11)), 10)).toEqual({ ok: false, message: "The file is 11 bytes; an upload may have at most 10 bytes. Split it into several files." });
  });
});

describe("delimiters and headers", () => {
  it("finds comma, semicolon and tab delimiters from the header line, ignoring quoted ones", () => {
    expect(detectDelimiter("a,b,c\n1;2;3")).toBe(",");
    expect(detectDelimiter("material;value;unit\r\nGaAs;1,5;eV")).toBe(";");
    expect(detectDelimiter("material\tvalue\n")).toBe("\t");
    expect(detectDelimiter('"a;b;c",d\n')).toBe(",");
    expect(detectDelimiter("material\n")).toBe(",");
  });

  it("maps spellings of our headers and names unknown, repeated and missing columns", () => {
    const ok = mapCsvHeader(["Material", "Quantity", "Temperature (K)", "Value", "Unit", "Method", "DOI", "Locator", "U1 eV"]);
    expect(ok.errors).toEqual([]);
    expect(ok.columns.map((c) => c?.key)).toEqual(["material", "quantity", "temperatureK", "value", "unit", "method", "source", "locator", "u1"]);
    const bad = mapCsvHeader(["material", "qty", "value", "value"]);
    expect(bad.errors[0]).toMatch(/^Column 2 “qty” is not a column Bandledger reads/);
    expect(bad.errors[1]).toBe("Columns 3 and 4 are both “value”.");
    expect(bad.errors.some((e) => e.startsWith("The column “quantity” is missing"))).toBe(true);
  });
});

describe("checking a proposal CSV", () => {
  it("takes good rows with a BOM and semicolons, converting each value exactly", async () => {
    const text = [HEADER, ...GOOD].map((l) => l.replaceAll(",", ";")).join("\r\n") + "\r\n";
    const r = await checkProposalCsv(new Uint8Array([0xef, 0xbb, 0xbf, ...enc(text)]), catalogue);
    expect(r.fileErrors).toEqual([]);
    expect(r.rows.flatMap((x) => x.errors)).toEqual([]);
    expect(r.ok).toBe(true);
    expect(r.delimiter).toBe(";");
    expect(r.hadByteOrderMark).toBe(true);
    expect(r.rows.map((x) => x.proposal?.prepared?.value)).toEqual(["5.65325", "-0.127", "1.519"]);
    expect(r.rows.map((x) => x.row)).toEqual([2, 3, 4]);
  });

  it("carries pseudopotential form factors in Ry or eV (Cohen & Bergstresser 1966, Phys. Rev. 141, 789, GaAs, from memory), and refuses one with a temperature", async () => {
    const CB = "10.1103/PhysRev.141.789,Band structures and pseudopotential form factors for fourteen semiconductors";
    const rows = [
      `GaAs,ff_vs3,,,,-0.23,Ry,,fitted,${CB},Table I`,
      `GaAs,ff_va3,,,,0.952398518609580,eV,,fitted,${CB},Table I`,
      `GaAs,ff_va11,,,,10,mRy,,fitted,${CB},Table I`,
    ];
    const r = await checkProposalCsv(enc([HEADER, ...rows].join("\n")), catalogue);
    expect(r.rows.flatMap((x) => x.errors.map(describeCsvIssue))).toEqual([]);
    // 1 Ry = 13.605693122994 eV [CODATA18], converted exactly.
    expect(r.rows.map((x) => x.proposal?.prepared?.value)).toEqual(["-3.12930941828862", "0.952398518609580", "0.13605693122994"]);
    const warm = await checkProposalCsv(enc([HEADER, `GaAs,ff_vs8,300,,,0.01,Ry,,fitted,${CB},Table I`].join("\n")), catalogue);
    expect(warm.rows.flatMap((x) => x.errors.map(describeCsvIssue)).join(" ")).toMatch(/Row 2, column “temperature_k”: .*does not depend on temperature/);
  });

  it("names the row and the column of every error", async () => {
    const rows = [
      `GaAs,lattice_a,300,,,5.65325,furlong,,compilation,10.1063/1.1368156,${TITLE},GaAs table`,
      `GaAs,lattice_a,77,,,five,Å,,compilation,10.1063/1.1368156,${TITLE},GaAs table`,
      `InSb,lattice_a,300,,,6.479,Å,,compilation,10.1063/1.1368156,${TITLE},p. 1`,
      `GaAs,lattice_a,4,,,=HYPERLINK("http://example.test"),Å,,compilation,10.1063/1.1368156,${TITLE},p. 1`,
    ];
    const r = await checkProposalCsv(enc([HEADER, ...rows].join("\n")), catalogue);
    expect(r.ok).toBe(false);
    const lines = r.rows.flatMap((x) => x.errors.map(describeCsvIssue));
    expect(lines).toContain("Row 2, column “unit”: “furlong” is not accepted here; use Å, nm, pm.");
    expect(lines).toContain("Row 3, column “value”: “five” is not a decimal number.");
    expect(lines).toContain("Row 4, column “material”: “InSb” is not a material in the ledger.");
    expect(lines.some((l) => l.startsWith("Row 5, column “value”: “=HYPERLINK(\"http://example.test\")” starts with “=” and a spreadsheet would run it as a formula"))).toBe(true);
    expect(r.rows.every((x) => x.proposal === null)).toBe(true);
  });

  it("refuses a row that repeats another one's record", async () => {
    const r = await checkProposalCsv(enc([HEADER, GOOD[0], GOOD[1], GOOD[0].replace("5.65325", "5.6533")].join("\n")), catalogue);
    expect(r.ok).toBe(false);
    expect(r.rows[2].errors.map(describeCsvIssue)).toEqual(["Row 4: Same material, quantity and conditions as row 2: one upload proposes one value per record."]);
  });

  it("counts cells against the header", async () => {
    const r = await checkProposalCsv(enc([HEADER, "GaAs,lattice_a,300"].join("\n")), catalogue);
    expect(r.rows[0].errors[0].message).toBe("The row has 3 cells where the header has 12; check the comma delimiters and the quotes.");
  });

  it("refuses a header with no rows and a file over the row limit", async () => {
    expect((await checkProposalCsv(enc(HEADER + "\n\n"), catalogue)).fileErrors).toEqual(["The file has a header but no rows of values."]);
    const many = await checkProposalCsv(enc([HEADER, ...GOOD].join("\n")), catalogue, { maxRows: 2 });
    expect(many.fileErrors).toEqual(["The file has 3 rows of values; one upload takes at most 2. Split it into several files."]);
    expect(many.rows).toEqual([]);
  });

  it("reports its progress while it checks", async () => {
    const calls: [number, number][] = [];
    await checkProposalCsv(enc([HEADER, ...GOOD].join("\n")), catalogue, { sliceSize: 2, onProgress: (d, t) => calls.push([d, t]) });
    expect(calls).toEqual([[2, 3], [3, 3]]);
  });
});

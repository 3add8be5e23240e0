import { createHash } from "node:crypto";
import { execFileSync } from "node:child_process";
import Papa from "papaparse";
import { describe, expect, it } from "vitest";
import {
  CSV_COLUMNS, canonicalJson, csvCell, guardCsvCell, parseReleaseCsv, parseReleaseJson, releaseFileName, serialiseRelease, sha256Hex,
  unguardCsvCell, verifyReleaseText, type ReleaseContent,
} from "./release-format";

// References: [FIPS180] NIST FIPS 180-4, Secure Hash Standard, example "abc" (SHA-256 digest in its appendix / the
// NIST example values); [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), values from memory;
// [OWASP-CSV] OWASP "CSV Injection": cells starting with = + - @ tab or CR are evaluated by spreadsheets.
// Independent implementations: node:crypto for SHA-256, Python's json and csv modules, papaparse.

function content(): ReleaseContent {
  const v01 = { kind: "doi" as const, doi: "10.1063/1.1368156", bibtexKey: null, reportNumber: null, title: "Band parameters for III–V compound semiconductors and their alloys", authors: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan", year: 2001 };
  return {
    schema: "bandledger.release",
    schemaVersion: 1,
    set: { slug: "hemt-baseline", name: "HEMT baseline", purpose: "AlGaAs/GaAs HEMT drift-diffusion runs", description: "Γ-valley values, 0 K fits;\nchecked \"twice\", by the device team" },
    release: { number: 3, frozenAt: "2026-03-02T09:15:00.123Z", frozenBy: "Ravi Menon", codataEdition: "CODATA 2018", softwareVersion: "0.1.0", itemCount: 3 },
    items: [
      {
        recordId: 11, revisionId: 41, revisionSeq: 2,
        material: { key: "GaAs", name: "Gallium arsenide", formula: "GaAs" },
        quantity: { key: "eg", symbol: "Eg", name: "Band gap" },
        value: "1.519", unit: "eV", uncertainty: "0.001", temperatureK: null, temperatureKind: "fit0", valley: "G", composition: null,
        validFromK: "0", validToK: "300", method: "compilation", source: v01, locator: "GaAs parameter table", notes: "=HYPERLINK(\"http://example.test\",\"x\")", approvedAt: "2026-02-01T10:00:00.000Z",
      },
      {
        recordId: 12, revisionId: 42, revisionSeq: 1,
        material: { key: "GaAs", name: "Gallium arsenide", formula: "GaAs" },
        quantity: { key: "f_kane", symbol: "F", name: "Remote-band parameter F" },
        value: "-1.94", unit: "1", uncertainty: null, temperatureK: null, temperatureKind: "independent", valley: null, composition: null,
        validFromK: null, validToK: null, method: "fitted", source: v01, locator: null, notes: "+ from the Kane fit, @ 0 K; -see table", approvedAt: "2026-02-01T10:00:00.000Z",
      },
      {
        recordId: 13, revisionId: 43, revisionSeq: 1,
        material: { key: "AlGaAs", name: "Aluminium gallium arsenide", formula: "Al(x)Ga(1-x)As" },
        quantity: { key: "lattice_a", symbol: "a", name: "Lattice constant" },
        value: "5.655605", unit: "Å", uncertainty: null, temperatureK: "300", temperatureKind: "stated", valley: null, composition: "0.3",
        validFromK: null, validToK: null, method: "calculated", source: { kind: "report", doi: null, bibtexKey: null, reportNumber: "KD-EPI-2026-014", title: "Vegard interpolation, x = 0.3", authors: null, year: null },
        locator: "p. 4, eq. (2)", notes: null, approvedAt: null,
      },
    ],
  };
}

function python(script: string, input: string): string {
  return execFileSync("python3", ["-c", script], { input, encoding: "utf8" });
}

describe("SHA-256 of the release bytes", () => {
  it("matches the FIPS 180-4 example and node:crypto [FIPS180]", async () => {
    expect(await sha256Hex("abc")).toBe("ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad");
    const text = "Eg(Γ) = 1.519 eV, α = 0.5405 meV/K ✓";
    expect(await sha256Hex(text)).toBe(createHash("sha256").update(text, "utf8").digest("hex"));
  });
});

describe("canonical JSON", () => {
  it("equals Python's json.dumps with sorted keys, compact separators and no ASCII escaping", () => {
    const c = content();
    const fromPython = python("import json,sys; sys.stdout.write(json.dumps(json.load(sys.stdin), sort_keys=True, separators=(',',':'), ensure_ascii=False))", JSON.stringify(c));
    expect(canonicalJson(c)).toBe(fromPython);
    expect(canonicalJson({ b: 1, a: { d: null, c: ["x", true] } })).toBe('{"a":{"c":["x",true],"d":null},"b":1}');
  });

  it("refuses binary floats and undefined: decimals travel as strings", () => {
    expect(() => canonicalJson({ value: 1.519 })).toThrow(/whole numbers/);
    expect(() => canonicalJson({ value: undefined })).toThrow(/undefined/);
    expect(() => canonicalJson({ n: 2 ** 60 })).toThrow(/whole numbers/);
  });
});

describe("serialiseRelease", () => {
  it("hashes the canonical content, which Python's hashlib over Python's canonical JSON reproduces", async () => {
    const c = content();
    const out = await serialiseRelease(c);
    const fromPython = python(
      "import json,sys,hashlib; d=json.load(sys.stdin); sys.stdout.write(hashlib.sha256(json.dumps(d['content'], sort_keys=True, separators=(',',':'), ensure_ascii=False).encode('utf-8')).hexdigest())",
      out.json,
    );
    expect(out.sha256).toBe(fromPython);
    expect(JSON.parse(out.json).sha256).toBe(out.sha256);
    expect(out.csvSha256).toBe(createHash("sha256").update(out.csv, "utf8").digest("hex"));
    expect(out.json.endsWith("}\n")).toBe(true);
    // The file is Python's json.dumps(indent=2, sort_keys=True) of the same document, plus a newline.
    expect(python("import json,sys; sys.stdout.write(json.dumps(json.load(sys.stdin), sort_keys=True, indent=2, ensure_ascii=False)+'\\n')", out.json)).toBe(out.json);
  });

  it("writes the same bytes for the same content, whatever the key order it was built in", async () => {
    const a = await serialiseRelease(content());
    const reordered = { items: content().items.map((i) => ({ ...Object.fromEntries(Object.entries(i).reverse()) }) as typeof i), release: content().release, set: content().set, schemaVersion: 1 as const, schema: "bandledger.release" as const };
    const b = await serialiseRelease(reordered);
    expect(b.json).toBe(a.json);
    expect(b.csv).toBe(a.csv);
    expect(b.sha256).toBe(a.sha256);
  });

  it("changes the hash when one digit of one value changes", async () => {
    const a = await serialiseRelease(content());
    const c = content();
    c.items[0].value = "1.518";
    const b = await serialiseRelease(c);
    expect(b.sha256).not.toBe(a.sha256);
  });

  it("refuses a value that is not a plain decimal string and a wrong item count", async () => {
    const c = content();
    c.items[0].value = "1.519e0";
    await expect(serialiseRelease(c)).rejects.toThrow();
    const d = content();
    d.release.itemCount = 2;
    await expect(serialiseRelease(d)).rejects.toThrow(/itemCount/);
  });
});

describe("verifyReleaseText", () => {
  it("accepts both forms as written and reports the content hash", async () => {
    const out = await serialiseRelease(content());
    for (const text of [out.json, out.csv]) {
      const v = await verifyReleaseText(text);
      expect(v).toMatchObject({ ok: true, sha256: out.sha256 });
    }
  });

  it("refuses every single-byte change anywhere in either form", async () => {
    const out = await serialiseRelease(content());
    for (const text of [out.json, out.csv]) {
      const bytes = new TextEncoder().encode(text);
      const decoder = new TextDecoder("utf-8", { fatal: false });
      let checked = 0;
      for (let i = 0; i < bytes.length; i++) {
        const copy = bytes.slice();
        copy[i] ^= 0x01;
        const v = await verifyReleaseText(decoder.decode(copy));
        expect(v.ok, `byte ${i} flipped`).toBe(false);
        checked++;
      }
      expect(checked).toBe(bytes.length);
    }
    // One verification per byte of both files: seconds of work, more on a machine shared with a full test run.
  }, 60_000);

  it("refuses a JSON file with its keys re-ordered or re-indented, though the content is the same", async () => {
    const out = await serialiseRelease(content());
    const compact = JSON.stringify(JSON.parse(out.json));
    const v = await verifyReleaseText(compact);
    expect(v).toMatchObject({ ok: false, reason: expect.stringMatching(/canonical form/) });
  });

  it("names a changed hash as a mismatch between stated and computed", async () => {
    const out = await serialiseRelease(content());
    const tampered = out.json.replace(/"value": "1\.519"/, '"value": "1.520"');
    const v = await verifyReleaseText(tampered);
    expect(v).toMatchObject({ ok: false, statedSha256: out.sha256 });
    if (!v.ok) expect(v.computedSha256).not.toBe(out.sha256);
  });

  it("refuses a file of another kind", async () => {
    expect(await verifyReleaseText("material,value\nGaAs,1.519\n")).toMatchObject({ ok: false, format: null });
  });
});

describe("CSV form", () => {
  it("reads back into exactly the same content, nulls included", async () => {
    const out = await serialiseRelease(content());
    expect(parseReleaseCsv(out.csv)).toEqual({ content: content(), sha256: out.sha256 });
    expect(parseReleaseJson(out.json)).toEqual({ content: content(), sha256: out.sha256 });
  });

  it("gives papaparse and Python's csv module the same table, with no cell a spreadsheet would run [OWASP-CSV]", async () => {
    const out = await serialiseRelease(content());
    const table = out.csv.split("\r\n").filter((l) => !l.startsWith("# ")).join("\r\n");
    const papa = Papa.parse<string[]>(table, { skipEmptyLines: true }).data;
    const py = JSON.parse(python("import csv,sys,json,io; r=[row for row in csv.reader(io.StringIO(sys.stdin.read(), newline='')) if row and not row[0].startswith('# ')]; sys.stdout.write(json.dumps(r))", out.csv)) as string[][];
    expect(py).toEqual(papa);
    expect(papa[0]).toEqual([...CSV_COLUMNS]);
    expect(papa).toHaveLength(4);
    const cells = py.flat();
    const risky = cells.filter((c) => /^[=+\-@\t\r]/.test(c) && !/^-?\d+(\.\d+)?$/.test(c));
    expect(risky).toEqual([]);
    const notes = papa[0].indexOf("notes");
    expect(papa[1][notes]).toBe("'=HYPERLINK(\"http://example.test\",\"x\")");
    expect(papa[2][notes]).toBe("'+ from the Kane fit, @ 0 K; -see table");
    expect(papa[2][papa[0].indexOf("value")]).toBe("-1.94");
    expect(papa[3][papa[0].indexOf("material_formula")]).toBe("Al(x)Ga(1-x)As");
  });

  it("keeps each preamble line a single spreadsheet cell: no separators, a leading # ", async () => {
    const out = await serialiseRelease(content());
    const preamble = out.csv.split("\r\n").filter((l) => l.startsWith("# "));
    expect(preamble.length).toBe(13);
    for (const line of preamble) expect(line).not.toMatch(/[,;\t]/);
    expect(preamble).toContain(`# sha256: "${out.sha256}"`);
    expect(preamble).toContain("# release_number: 3");
  });

  it("guards formula-like text reversibly and leaves numbers alone", () => {
    for (const s of ["=1+1", "+x", "-x", "@SUM(A1)", "\tx", "'=already", "''+two", "plain", "'quote", "-1.94", "+3", "-0.000", "1e5"]) {
      expect(unguardCsvCell(guardCsvCell(s))).toBe(s);
    }
    expect(guardCsvCell("=1+1")).toBe("'=1+1");
    expect(guardCsvCell("-1.94")).toBe("-1.94");
    expect(guardCsvCell("-x")).toBe("'-x");
    expect(csvCell('say "hi", then go')).toBe('"say ""hi"", then go"');
    expect(csvCell(null)).toBe("");
  });
});

describe("releaseFileName", () => {
  it("names the file after the set and the release", () => {
    expect(releaseFileName("hemt-baseline", 3, "json")).toBe("hemt-baseline-r3.json");
    expect(releaseFileName("hemt-baseline", 3, "csv")).toBe("hemt-baseline-r3.csv");
  });
});

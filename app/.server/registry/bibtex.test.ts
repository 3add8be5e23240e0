import { describe, expect, it } from "vitest";
import { parseBibtexEntry } from "./bibtex";

// [V01] as its publisher's BibTeX export would give it; [Var67] Y. P. Varshni, Physica 34, 149–154 (1967).
const V01_BIBTEX = `@article{Vurgaftman2001,
  author  = {Vurgaftman, I. and Meyer, J. R. and Ram-Mohan, L. R.},
  title   = {Band parameters for {III--V} compound semiconductors and their alloys},
  journal = {Journal of Applied Physics},
  volume  = {89},
  number  = {11},
  pages   = {5815--5875},
  year    = {2001},
  month   = jun,
  doi     = {10.1063/1.1368156}
}`;

describe("parseBibtexEntry (citation-js with its BibTeX plugin)", () => {
  it("turns the [V01] entry into CSL-JSON", () => {
    const r = parseBibtexEntry(V01_BIBTEX);
    expect(r.ok).toBe(true);
    if (!r.ok) return;
    expect(r.entry).toMatchObject({
      key: "Vurgaftman2001",
      title: "Band parameters for III–V compound semiconductors and their alloys",
      authors: "I. Vurgaftman, J. R. Meyer, L. R. Ram-Mohan",
      year: 2001,
      doi: "10.1063/1.1368156",
    });
    expect(r.entry.csl).toMatchObject({
      type: "article-journal",
      "container-title": "Journal of Applied Physics",
      volume: "89",
      issue: "11",
      page: "5815-5875",
      author: [{ family: "Vurgaftman", given: "I." }, { family: "Meyer", given: "J. R." }, { family: "Ram-Mohan", given: "L. R." }],
    });
    expect(r.entry.csl.issued?.["date-parts"]?.[0]).toEqual([2001, 6]);
  });

  it("reads LaTeX accents and a book without a DOI", () => {
    const r = parseBibtexEntry(`@book{AshcroftMermin1976, author = {Ashcroft, N. W. and Mermin, N. D.}, title = {Solid State Physics}, publisher = {Holt, Rinehart and Winston}, year = 1976, note = {Kapitel {\\"u}ber B{\\"a}nder}}`);
    expect(r.ok && r.entry).toMatchObject({ key: "AshcroftMermin1976", doi: null, year: 1976, csl: { type: "book", note: "Kapitel über Bänder" } });
  });

  it.each([
    ["", /starts with @/],
    ["Vurgaftman et al., J. Appl. Phys. 89, 5815", /starts with @/],
    ["@article{x, title={Unclosed}", /could not be read/],
    [`${V01_BIBTEX}\n@article{Varshni1967, author={Varshni, Y. P.}, title={Temperature dependence of the energy gap in semiconductors}, journal={Physica}, volume={34}, pages={149--154}, year={1967}}`, /one entry at a time/],
    ["@article{NoTitle, author={Varshni, Y. P.}, year={1967}}", /no title/],
    ["@article{BadDoi, title={T}, doi={not-a-doi}}", /DOI is malformed/],
  ])("refuses %j", (text, message) => {
    const r = parseBibtexEntry(text);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.message).toMatch(message);
  });
});

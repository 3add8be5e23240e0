import { describe, expect, it } from "vitest";
import { RYDBERG_EV } from "~/domain/physics";
import { EPM_EXAMPLE, epmQueryOf, readEpmQuery, runEpmPage } from "./epm-form";

// [CB66] Cohen & Bergstresser, Phys. Rev. 141, 789 (1966): silicon's form factors (Ry), a = 5.43 Å and Eg(Γ) = 3.4 eV,
// from memory. [CODATA18] 1 Ry = 13.605693122994 eV.

const query = (q: string) => new URLSearchParams(q);

describe("the crystal check page's query", { timeout: 60_000 }, () => {
  it("opens on silicon [CB66] when the address has no inputs, with the band structure", () => {
    const page = runEpmPage(query(""));
    expect(page.values).toEqual(EPM_EXAMPLE);
    expect(page.result?.verdict).toBe("pass");
    expect(page.result?.fundamental.valley).toBe("Δ");
    expect(page.result?.bands?.energiesEv).toHaveLength(8);
  });

  it("reads a in nm and form factors in eV as the same crystal [CODATA18]", () => {
    const ry = runEpmPage(query("structure=diamond&lattice=5.43&s3=-0.21&s8=0.04&s11=0.08"));
    const ev = runEpmPage(
      query(`structure=diamond&lattice=0.543&unit=nm&ffunit=ev&s3=${-0.21 * RYDBERG_EV}&s8=${0.04 * RYDBERG_EV}&s11=${0.08 * RYDBERG_EV}`),
    );
    expect(Math.abs(Number(ev.result!.gamma.gapEv) - Number(ry.result!.gamma.gapEv))).toBeLessThan(1e-9);
    expect(Math.abs(Number(ev.result!.latticeAngstrom) - 5.43)).toBeLessThan(1e-12);
  });

  it("says at each field what is wrong, and keeps what was typed", () => {
    const { values, errors, input } = readEpmQuery(
      query("structure=diamond&lattice=0&s3=abc&s8=&s11=2&a3=0.07&gamma=-1&x=1,2&tolerance=0"),
    );
    expect(input).toBeNull();
    expect(values.formFactors.s3).toBe("abc");
    expect(errors).toMatchObject({
      lattice: "The lattice constant lies between 2 and 10 Å.",
      s3: "“abc” is not a decimal number.",
      s8: "Enter V_S(8) in Ry.",
      s11: "A form factor lies between −1 and 1 Ry.",
      a3: "Diamond has one kind of atom: leave V_A empty, or choose zinc blende.",
      gamma: "A stated gap lies between 0 and 20 eV.",
      x: "Use a point as the decimal separator, without thousands separators.",
      tolerance: "The tolerance lies above 0 and at most 5 eV.",
    });
    expect(readEpmQuery(query("structure=wurtzite&lattice=5.43&s3=-0.21&s8=0.04&s11=0.08")).errors.structure).toBe("Choose diamond or zinc blende.");
    expect(readEpmQuery(query("structure=diamond&lattice=5.43&unit=mile&s3=-0.21&s8=0.04&s11=0.08")).errors.lattice).toMatch(/not a unit of the lattice constant/);
    expect(readEpmQuery(query("structure=diamond&lattice=5.43&ffunit=hartree&s3=-0.21&s8=0.04&s11=0.08")).errors.ffunit).toMatch(/not a unit of the form factors/);
    // Zero antisymmetric form factors are no second kind of atom.
    expect(readEpmQuery(query("structure=diamond&lattice=5.43&s3=-0.21&s8=0.04&s11=0.08&a3=0")).errors).toEqual({});
  });

  it("round-trips a filled form through its query string", () => {
    const values = { ...EPM_EXAMPLE, structure: "zincblende" as const, formFactors: { s3: "-0.23", s8: "0.01", s11: "0.06", a3: "0.07", a4: "0.05", a11: "0.01" }, x: "1.981" };
    expect(readEpmQuery(epmQueryOf(values)).values).toEqual(values);
  });
});

import { describe, expect, it } from "vitest";
import { NFE_EXAMPLE, nfeQueryOf, readNfeQuery, runNfePage } from "./nfe-form";

// [Kittel] ch. 7: two-band gap 2|U_1|; ε(π/a) = 1.176593107 eV for a = 5.65325 Å (calc, CODATA 2018 constants).

const query = (q: string) => new URLSearchParams(q);

describe("the NFE check page's query", () => {
  it("opens on the two-band example when the address has no inputs", () => {
    const page = runNfePage(query(""));
    expect(page.values).toEqual(NFE_EXAMPLE);
    expect(page.result?.verdict).toBe("none");
    expect(Number(page.result?.zoneBoundaryEv)).toBeCloseTo(1.176593107, 8);
  });

  it("reads a period in nm as Å, and gives the verdict against the stated gap", () => {
    const page = runNfePage(query("period=0.565325&unit=nm&n=1&u=0.1&stated=0.2&tolerance=0.01"));
    expect(page.result?.periodAngstrom).toBeCloseTo(5.65325, 12);
    expect(page.result?.verdict).toBe("pass");
    expect(runNfePage(query("period=5.65325&n=1&u=0.1&stated=0.1")).result?.verdict).toBe("fail");
  });

  it("says at each field what is wrong, and keeps what was typed", () => {
    const { values, errors, input } = readNfeQuery(query("period=-1&n=1&u=abc&n=1&u=0.2&n=x&u=1&gap=0&mass=0&tolerance=0&stated=1,2"));
    expect(input).toBeNull();
    expect(values.period).toBe("-1");
    expect(errors).toMatchObject({
      period: "The period lies between 0 and 100 Å.",
      "coefficients.0": "“abc” is not a decimal number.",
      "coefficients.1": "U_1 is given twice.",
      "coefficients.2": "The order n is a whole number from 1 to 50.",
      gap: "The gap index is a whole number from 1 to 20.",
      mass: "The mass lies between 0.001 and 100 m₀.",
      tolerance: "The tolerance lies above 0 and at most 1 eV.",
      stated: "Use a point as the decimal separator, without thousands separators.",
    });
    expect(readNfeQuery(query("period=5&n=&u=")).errors.coefficients).toBe("Enter at least one coefficient U_n.");
  });

  it("puts a period or a mass too small for double precision at its field, and keeps what was typed", () => {
    const period = runNfePage(query("period=0.000001&n=1&u=0.5&stated=1"));
    expect(period.result).toBeNull();
    expect(period.values.period).toBe("0.000001");
    expect(period.errors.period).toMatch(/^The period 0\.000001 Å is too small: .* at least 0\.0123 Å\.$/);
    expect(period.errors.form).toBeUndefined();
    const mass = runNfePage(query("period=2&n=1&u=0.5&mass=0.001&gap=20"));
    expect(mass.errors.mass).toMatch(/^The mass 0\.001 m0 is too small/);
  });

  it("round-trips a filled form through its query string, with as many coefficient rows as asked for", () => {
    const values = { ...NFE_EXAMPLE, coefficients: [{ n: "1", u: "0.71125" }, { n: "2", u: "0.0250" }], stated: "1.4225" };
    expect(readNfeQuery(nfeQueryOf(values)).values).toEqual(values);
    expect(readNfeQuery(query("period=5.65325&n=1&u=0.1&rows=3")).values.coefficients).toHaveLength(3);
  });
});

import { execFile } from "node:child_process";
import { fileURLToPath } from "node:url";
import { describe, expect, it } from "vitest";
import { main } from "../../app/cli/main";

// The real command, as `npm run bandledger -- …` runs it. Check values and their published sources:
// [V01] Vurgaftman, Meyer, Ram-Mohan, J. Appl. Phys. 89, 5815 (2001), table values from memory; [Var67] Varshni, Physica 34, 149 (1967);
// [Kane57] Kane, J. Phys. Chem. Solids 1, 249 (1957); [Vegard21] Vegard, Z. Phys. 5, 17 (1921);
// [AS] Abramowitz & Stegun, Table 20.1; [CB66] Cohen & Bergstresser, Phys. Rev. 141, 789 (1966), table of form
// factors (values and table number from memory); "calc" = computed from the listed inputs with the formula named.
const root = fileURLToPath(new URL("../..", import.meta.url));

interface Run {
  code: number;
  stdout: string;
  stderr: string;
}

function bandledger(...args: string[]): Promise<Run> {
  return new Promise((resolve) => {
    execFile("node_modules/.bin/tsx", ["app/cli/main.ts", ...args], { cwd: root }, (error, stdout, stderr) => {
      const code = error ? (typeof error.code === "number" ? error.code : 1) : 0;
      resolve({ code, stdout, stderr });
    });
  });
}

/** The same dispatcher in this process: quick, for the many variations. */
async function inProcess(...args: string[]): Promise<Run> {
  let stdout = "";
  let stderr = "";
  const code = await main(args, { stdout: (t) => void (stdout += t), stderr: (t) => void (stderr += t) });
  return { code, stdout, stderr };
}

async function json(...args: string[]): Promise<Record<string, unknown>> {
  const run = await bandledger(...args, "--json");
  expect(run.code, run.stderr).toBe(0);
  return JSON.parse(run.stdout);
}

async function jsonInProcess(...args: string[]): Promise<Record<string, unknown>> {
  const run = await inProcess(...args, "--json");
  expect(run.code, run.stderr).toBe(0);
  return JSON.parse(run.stdout);
}

function significantDigits(decimal: string): number {
  return decimal.replace(/^-/, "").replace(".", "").replace(/^0+/, "").length;
}

/** Agrees with a published value to every digit printed (half a unit in its last place, plus slack). */
function expectPrinted(actual: number, printed: string, slack = 0) {
  const decimals = printed.split(".")[1]?.length ?? 0;
  expect(Math.abs(actual - Number(printed))).toBeLessThanOrEqual(0.5 * 10 ** -decimals * (1 + 1e-9) + slack);
}

/** A decimal string with at least 10 significant digits that agrees with the printed value. */
function expectDecimal(actual: unknown, printed: string, slack = 0) {
  expect(typeof actual).toBe("string");
  expect(significantDigits(actual as string)).toBeGreaterThanOrEqual(10);
  expectPrinted(Number(actual), printed, slack);
}

const EPSILON_PI_OVER_A = 1.1765931068074729; // ε(π/a) for a = 5.65325 Å (calc, 1.176593107 eV)

describe.concurrent("bandledger, the real command", { timeout: 30_000 }, () => {
  it("nfe: a pure cosine with q = 5 gives the Mathieu band edges ε1·b1, ε1·a1 [AS]", async () => {
    const out = await json("nfe", "--period", "5.65325", "--coefficient", `1:${5 * EPSILON_PI_OVER_A}`);
    expect(Object.keys(out)).toEqual(["gap", "firstOrder", "centralEquation", "verdict"]);
    expect(out.gap).toBe(1);
    expect(out.verdict).toBe("none");
    const central = out.centralEquation as Record<string, unknown>;
    expect(Object.keys(central)).toEqual(["gapEv", "lowerEv", "upperEv", "planeWaves", "converged"]);
    expect(Number.isInteger(central.planeWaves)).toBe(true);
    expect(central.converged).toBe(true);
    for (const key of ["gapEv", "lowerEv", "upperEv"]) expect(significantDigits(central[key] as string)).toBeGreaterThanOrEqual(10);
    // Table 20.1 prints 8 decimals; the edges are converged to 1e-9 eV, i.e. 1e-9/ε1 in these units.
    expectPrinted(Number(central.lowerEv) / EPSILON_PI_OVER_A, "-5.79008060", 1e-9);
    expectPrinted(Number(central.upperEv) / EPSILON_PI_OVER_A, "1.85818754", 1e-9);
    // First order: 2|U| = 10 ε(π/a), ten times the published 1.176593107 eV.
    expectDecimal((out.firstOrder as Record<string, unknown>).gapEv, "11.76593107", 5e-8);
  });

  it("nfe: a basis that hits the plane-wave cap says converged: false and exits 4, the numbers still printed", async () => {
    // U_1 = 1e6 eV at a = 5.65325 Å is q ≈ 8.5e5 in Mathieu's terms: far beyond what 201 plane waves resolve
    // (U_10 makes the basis grow ten plane waves a side per step, so the cap comes in nine steps).
    const run = await bandledger("nfe", "--period", "5.65325", "--coefficient", "1:1000000", "--coefficient", "10:1", "--stated", "1", "--json");
    expect(run.code).toBe(4);
    const central = JSON.parse(run.stdout).centralEquation as Record<string, unknown>;
    expect(central.converged).toBe(false);
    expect(central.planeWaves).toBe(201);
    expect(run.stderr).toMatch(/did not converge/);
  });

  it("calc varshni: GaAs Γ at 300 K is 1.4224821 eV [Var67] with [V01] (calc)", async () => {
    const out = await json("calc", "varshni", "--eg0", "1.519", "--alpha", "0.5405", "--beta", "204", "--temperature", "300");
    expect(Object.keys(out)).toEqual(["valueEv"]);
    expectDecimal(out.valueEv, "1.4224821");
  });

  it("calc bowing: Al(0.3)Ga(0.7)As Γ with C = −0.127 + 1.310x is 1.93714 eV [V01] (calc)", async () => {
    const out = await json("calc", "bowing", "--eg-a", "3.099", "--eg-b", "1.519", "--c0", "-0.127", "--c1", "1.310", "--x", "0.3");
    expectDecimal(out.valueEv, "1.93714");
  });

  it("calc kane: GaAs m* = 0.0670188 m0 [Kane57] with [V01] (calc)", async () => {
    const out = await json("calc", "kane", "--ep", "28.8", "--f", "-1.94", "--eg", "1.519", "--delta", "0.341");
    expect(Object.keys(out)).toEqual(["massM0"]);
    expectDecimal(out.massM0, "0.0670188");
  });

  it("calc vegard: Al(0.3)Ga(0.7)As a = 5.655605 Å [Vegard21] with [V01] (calc)", async () => {
    const out = await json("calc", "vegard", "--a-a", "5.6611", "--a-b", "5.65325", "--x", "0.3");
    expect(Object.keys(out)).toEqual(["valueAngstrom"]);
    expectDecimal(out.valueAngstrom, "5.655605");
  });

  for (const [args, message] of [
    [["frobnicate"], /unknown command "frobnicate"/],
    [["nfe", "--coefficient", "1:0.5"], /--period is required/],
  ] as [string[], RegExp][]) {
    it(`exits 2 with one line on stderr: ${args.join(" ")}`, async () => {
      const run = await bandledger(...args);
      expect(run.code).toBe(2);
      expect(run.stdout).toBe("");
      expect(run.stderr.trimEnd().split("\n")).toHaveLength(1);
      expect(run.stderr).toMatch(message);
    });
  }
});

describe("bandledger, its dispatcher in process", () => {
  it("nfe: the two-band gap 2|U| to first order, and pass / warn / fail against a stated gap [Kittel] (calc)", async () => {
    const args = ["nfe", "--period", "5.65325", "--coefficient", "1:0.1"];
    const none = await jsonInProcess(...args);
    expectDecimal((none.firstOrder as Record<string, unknown>).gapEv, "0.2");
    const central = Number((none.centralEquation as Record<string, unknown>).gapEv);
    expect(Math.abs(central - 0.2)).toBeLessThan(1e-4);
    expect((await jsonInProcess(...args, "--stated", String(central))).verdict).toBe("pass");
    expect((await jsonInProcess(...args, "--stated", String(central + 0.02))).verdict).toBe("warn");
    expect((await jsonInProcess(...args, "--stated", "0.4", "--tolerance", "0.01")).verdict).toBe("fail");
  });

  it("nfe: a period in nm, a second gap, several coefficients and a mass", async () => {
    const rest = ["--coefficient", "1:0.5", "--coefficient", "2:-0.2", "--gap", "2", "--mass", "0.5"];
    const angstrom = await jsonInProcess("nfe", "--period", "5.65325", ...rest);
    const nm = await jsonInProcess("nfe", "--period", "0.565325", "--period-unit", "nm", ...rest);
    expect(nm).toEqual(angstrom);
    expect(angstrom.gap).toBe(2);
    expectDecimal((angstrom.firstOrder as Record<string, unknown>).gapEv, "0.4");
  });

  it("calc: Varshni at 77 K is 1.507596 eV [Var67] with [V01] (calc); bowing returns its end point at x = 1", async () => {
    const cold = await jsonInProcess("calc", "varshni", "--eg0", "1.519", "--alpha", "0.5405", "--beta", "204", "--temperature", "77");
    expectDecimal(cold.valueEv, "1.507596");
    const end = await jsonInProcess("calc", "bowing", "--eg-a", "3.099", "--eg-b", "1.519", "--c0", "-0.127", "--x", "1");
    expectDecimal(end.valueEv, "3.099");
  });

  it("prints a readable aligned table without --json", async () => {
    const run = await inProcess("calc", "kane", "--ep", "28.8", "--f", "-1.94", "--eg", "1.519", "--delta", "0.341");
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/Kane/);
    const rows = run.stdout.trim().split("\n").slice(1);
    const valueEnds = rows.map((row) => row.replace(/\s+(eV|m0)$/, "").length);
    expect(new Set(valueEnds).size).toBe(1);
    expect(run.stdout).toMatch(/m\*\s+0\.0670188\d+\s+m0/);
  });

  it("nfe prints a table with the verdict and residual", async () => {
    const run = await inProcess("nfe", "--period", "5.65325", "--coefficient", "1:0.1", "--stated", "0.2");
    expect(run.stdout).toMatch(/central-equation gap\s+0\.1999\d+\s+eV/);
    expect(run.stdout).toMatch(/residual \(stated − central\)\s+0\.0000\d+\s+eV/);
    expect(run.stdout).toMatch(/verdict\s+pass/);
  });

  it("nfe: a table run that does not converge says so and exits 4", async () => {
    const run = await inProcess("nfe", "--period", "5.65325", "--coefficient", "1:1000000", "--coefficient", "10:1");
    expect(run.code).toBe(4);
    expect(run.stdout).toMatch(/plane waves\s+201\s+\(not converged\)/);
  });

  it("nfe: a period or a mass too small for double precision is exit 2 naming the option", async () => {
    const period = await inProcess("nfe", "--period", "0.000001", "--coefficient", "1:0.5", "--json");
    expect(period.code).toBe(2);
    expect(period.stdout).toBe("");
    expect(period.stderr).toMatch(/^bandledger nfe: --period: the period 0\.000001 Å is too small.*at least 0\.0123 Å$/m);
    const mass = await inProcess("nfe", "--period", "5.65325", "--coefficient", "1:0.5", "--mass", "0.0000001");
    expect(mass.code).toBe(2);
    expect(mass.stderr).toMatch(/--mass: the mass 1e-7 m0 is too small/);
  });

  it("lists download (not pull) and names a release as two arguments in every usage that takes one", async () => {
    const help = (await inProcess("--help")).stdout;
    expect(help).toMatch(/^  download  /m);
    expect(help).not.toMatch(/\bpull\b/);
    for (const name of ["download", "evaluate"]) {
      const usage = (await inProcess(name, "--help")).stdout;
      expect(usage).toMatch(new RegExp(`^usage: bandledger ${name} <set> <release> `));
      expect(usage).toContain("e.g. hemt-baseline 3");
      expect(usage).not.toMatch(/@|\bpull\b/);
    }
  });

  it("prints usage with --help, for each command too, and exits 0", async () => {
    for (const args of [["--help"], ["nfe", "--help"], ["calc", "--help"], ["calc", "bowing", "--help"], ["help"]]) {
      const run = await inProcess(...args);
      expect(run.code).toBe(0);
      expect(run.stdout).toMatch(/usage: bandledger/);
    }
  });

  const bad: [string[], RegExp][] = [
    [["frobnicate"], /unknown command "frobnicate"/],
    [["calc", "frobnicate"], /unknown calculation "frobnicate"/],
    [["calc"], /calc needs a calculation/],
    [["nfe", "--coefficient", "1:0.5"], /--period is required/],
    [["nfe", "--period", "5.65325"], /--coefficient is required/],
    [["nfe", "--period", "abc", "--coefficient", "1:0.5"], /--period must be a number/],
    [["nfe", "--period", "-5", "--coefficient", "1:0.5"], /--period must be positive/],
    [["nfe", "--period", "5", "--coefficient", "0.5"], /--coefficient must be n:U/],
    [["nfe", "--period", "5", "--coefficient", "1:0.5", "--coefficient", "1:0.2"], /--coefficient 1 is given twice/],
    [["nfe", "--period", "5", "--coefficient", "1:0.5", "--gap", "0"], /--gap/],
    [["nfe", "--period", "5", "--coefficient", "1:0.5", "--period-unit", "mile"], /--period-unit/],
    [["nfe", "--period", "5", "--coefficient", "1:0.5", "--stated"], /--stated/],
    [["nfe", "--period", "5", "--coefficient", "1:0.5", "--frob", "1"], /--frob/],
    [["nfe", "--period", "5", "--period", "6", "--coefficient", "1:0.5"], /--period is given twice/],
    [["nfe", "--period=5", "--coefficient", "1:0.5", "--period=6"], /--period is given twice/],
    [["nfe", "--period", "5", "--coefficient", "1:0.5", "--stated", "1", "--stated", "-1"], /--stated is given twice/],
    [["nfe", "--period", "5", "--coefficient", "1:0.5", "--gap", "1", "--gap", "2"], /--gap is given twice/],
    [["calc", "bowing", "--eg-a", "3.099", "--eg-b", "1.519", "--c0", "-0.127", "--c0", "-0.2", "--x", "0.3"], /--c0 is given twice/],
    [["download", "hemt-baseline", "3", "--out", "a.json", "--out", "b.json"], /--out is given twice/],
    [["verify", "release.json", "--sha256", "ab", "--sha256", "cd"], /--sha256 is given twice/],
    [["calc", "varshni", "--eg0", "1.519", "--alpha", "0.5405", "--beta", "204"], /--temperature is required/],
    [["calc", "bowing", "--eg-a", "3.099", "--eg-b", "1.519", "--c0", "-0.127", "--x", "1.5"], /--x must be at most 1/],
    [["calc", "kane", "--ep", "28.8", "--f", "-1.94", "--eg", "zero", "--delta", "0.341"], /--eg must be a number/],
    [["calc", "vegard", "--a-a", "5.6611", "--a-b", "5.65325", "--x", "0.3", "extra"], /unexpected argument "extra"/],
    // evaluate refuses its arguments before it reaches a server (the token is a well-formed placeholder).
    [["evaluate", "--temperature", "77", "--out", "x.json", "--token", "blt_t"], /name the release to evaluate/],
    [["evaluate", "hemt-baseline", "--temperature", "77", "--out", "x.json", "--token", "blt_t"], /name the release number after the set, e\.g\. hemt-baseline 3/],
    [["evaluate", "hemt-baseline", "0", "--temperature", "77", "--out", "x.json", "--token", "blt_t"], /the release number is a whole number from 1/],
    [["evaluate", "Hemt_Baseline", "3", "--temperature", "77", "--out", "x.json", "--token", "blt_t"], /the set's short name is lower-case letters/],
    [["evaluate", "hemt-baseline", "3", "4", "--temperature", "77", "--out", "x.json", "--token", "blt_t"], /unexpected argument "4"/],
    [["evaluate", "hemt-baseline", "3", "--out", "x.json", "--token", "blt_t"], /--temperature is required/],
    [["evaluate", "hemt-baseline", "3", "--temperature", "-3", "--out", "x.json", "--token", "blt_t"], /--temperature: choose a temperature from 0 to 2000 K/],
    [["evaluate", "hemt-baseline", "3", "--temperature", "cold", "--out", "x.json", "--token", "blt_t"], /--temperature: .*not a decimal number/],
    [["evaluate", "hemt-baseline", "3", "--temperature", "77", "--x", "1.01", "--out", "x.json", "--token", "blt_t"], /--x: the composition x lies between 0 and 1/],
    [["evaluate", "hemt-baseline", "3", "--temperature", "77", "--missing-bowing", "cubic", "--out", "x.json", "--token", "blt_t"], /--missing-bowing/],
    [["evaluate", "hemt-baseline", "3", "--temperature", "77", "--token", "blt_t"], /--out is required/],
    [["evaluate", "hemt-baseline", "3", "--temperature", "77", "--out", "x", "--format", "xml", "--token", "blt_t"], /--format must be json or csv/],
    [["download", "hemt-baseline", "three", "--out", "x.json", "--token", "blt_t"], /the release number is a whole number from 1, e\.g\. hemt-baseline 3 \(got "three"\)/],
    [["download", "--out", "x.json", "--token", "blt_t"], /name the release to download as <set> <release>, e\.g\. hemt-baseline 3/],
    // Earlier versions' words: one line naming today's form, exit 2, nothing fetched.
    [["pull", "hemt-baseline@3", "--out", "x.json", "--token", "blt_t"], /^bandledger: "pull" is now "download": bandledger download hemt-baseline 3 --out x\.json --token blt_t\n$/],
    [["pull"], /^bandledger: "pull" is now "download": bandledger download <set> <release> --out <file>\n$/],
    [["download", "hemt-baseline@3", "--out", "x.json", "--token", "blt_t"], /^bandledger download: name the release as two arguments, the set and the release number: "hemt-baseline 3" \(the form "hemt-baseline@3" is no longer read\)\n$/],
    [["evaluate", "hemt-baseline@3", "--temperature", "77", "--out", "x.json", "--token", "blt_t"], /^bandledger evaluate: name the release as two arguments, .*"hemt-baseline 3"/],
  ];
  for (const [args, message] of bad) {
    it(`exits 2 with one line naming the problem: ${args.join(" ")}`, async () => {
      const run = await inProcess(...args);
      expect(run.code).toBe(2);
      expect(run.stdout).toBe("");
      expect(run.stderr.trimEnd().split("\n")).toHaveLength(1);
      expect(run.stderr).toMatch(message);
    });
  }
});

// Cohen & Bergstresser's form factors (Ry) and lattice constants (Å) [CB66].
const SI = ["--structure", "diamond", "--lattice", "5.43", "--form-factor", "S3:-0.21", "--form-factor", "S8:0.04", "--form-factor", "S11:0.08"];
const GAAS_SYMMETRIC = ["--form-factor", "S3:-0.23", "--form-factor", "S8:0.01", "--form-factor", "S11:0.06"];
const GAAS = ["--structure", "zincblende", "--lattice", "5.64", ...GAAS_SYMMETRIC, "--form-factor", "A3:0.07", "--form-factor", "A4:0.05", "--form-factor", "A11:0.01"];

describe("bandledger epm", { timeout: 60_000 }, () => {
  it("the real command: silicon's Γ gap is 3.4 eV [CB66, from memory] and its fundamental gap lies along Δ", async () => {
    const out = await json("epm", ...SI, "--stated-gamma", "3.4");
    expect(Object.keys(out)).toEqual(["gamma", "x", "l", "fundamental", "planeWaves", "verdict"]);
    const gamma = out.gamma as Record<string, unknown>;
    expect(Object.keys(gamma)).toEqual(["gapEv", "statedEv", "residualEv", "verdict"]);
    for (const key of ["gapEv", "residualEv"]) expect(significantDigits(gamma[key] as string)).toBe(12);
    // The tolerance of the domain tests: half the printed 0.1 eV, plus the spread of their ~90-plane-wave basis.
    expect(Math.abs(Number(gamma.gapEv) - 3.4)).toBeLessThan(0.1);
    expect(gamma.verdict).toBe("pass");
    expect(Object.keys(out.l as object)).toEqual(["gapEv"]);
    const x = out.x as Record<string, Record<string, string>>;
    expect(Math.abs(Number(x.gammaXMinimum.fraction) - 0.85)).toBeLessThan(0.01);
    expect(out.fundamental).toEqual({ gapEv: x.gammaXMinimum.gapEv, valley: "Δ" });
    expect(Number.isInteger(out.planeWaves)).toBe(true);
    expect(out.verdict).toBe("pass");
  });

  it("reads the lattice constant in nm and form factors in eV as the same crystal (1 Ry = 13.605693122994 eV [CODATA18])", async () => {
    const angstrom = await jsonInProcess("epm", ...SI);
    const nm = await jsonInProcess("epm", ...SI.map((a) => (a === "5.43" ? "0.543" : a)), "--lattice-unit", "nm");
    expect(nm).toEqual(angstrom);
    const ry = 13.605693122994;
    const ev = await jsonInProcess("epm", "--structure", "diamond", "--lattice", "5.43", "--form-factor-unit", "ev",
      "--form-factor", `S3:${-0.21 * ry}`, "--form-factor", `S8:${0.04 * ry}`, "--form-factor", `S11:${0.08 * ry}`);
    for (const point of ["gamma", "x", "l"]) {
      const a = Number((angstrom[point] as Record<string, string>).gapEv);
      const b = Number((ev[point] as Record<string, string>).gapEv);
      expect(Math.abs(a - b)).toBeLessThan(1e-9);
    }
  });

  it("zinc blende with no antisymmetric form factors is diamond; GaAs [CB66] has its gap at Γ and a verdict per stated gap", async () => {
    const diamond = await jsonInProcess("epm", "--structure", "diamond", "--lattice", "5.64", ...GAAS_SYMMETRIC);
    const zb = await jsonInProcess("epm", "--structure", "zincblende", "--lattice", "5.64", ...GAAS_SYMMETRIC);
    expect(zb).toEqual(diamond);
    const gaas = await jsonInProcess("epm", ...GAAS);
    expect((gaas.fundamental as Record<string, string>).valley).toBe("Γ");
    const gamma = Number((gaas.gamma as Record<string, string>).gapEv);
    const stated = await jsonInProcess("epm", ...GAAS, "--stated-gamma", String(gamma + 0.1), "--stated-l", "9", "--tolerance", "0.15");
    expect((stated.gamma as Record<string, string>).verdict).toBe("pass");
    expect((stated.l as Record<string, string>).verdict).toBe("fail");
    expect(stated.verdict).toBe("fail");
    const warn = await jsonInProcess("epm", ...GAAS, "--stated-gamma", String(gamma + 0.2));
    expect(warn.verdict).toBe("warn");
  });

  it("prints a readable table with the gaps, the Γ–X minimum, the plane waves and the caution", async () => {
    const run = await inProcess("epm", ...SI, "--stated-x", "1.17");
    expect(run.code).toBe(0);
    expect(run.stdout).toMatch(/Eg\(Γ\) = E5\(Γ\) − E4\(Γ\)\s+3\.4\d+\s+eV/);
    expect(run.stdout).toMatch(/lowest conduction energy along Γ–X\s+0\.8\d+\s+eV/);
    expect(run.stdout).toMatch(/plane waves\s+\d+\s+\|G\|² ≤ \d+/);
    expect(run.stdout).toMatch(/verdict\s+warn/);
    expect(run.stdout).toMatch(/does not replace measured values/);
    expect((await inProcess("epm", "--help")).stdout).toMatch(/usage: bandledger epm/);
  });

  const cases: [string[], RegExp][] = [
    [[...SI, "--form-factor", "A3:0.1"], /--form-factor A3: antisymmetric form factors need --structure zincblende/],
    [["epm", "--structure", "diamond", "--lattice", "5.43", "--form-factor", "S4:0.1"], /--form-factor S4: unknown key/],
    [["epm", "--structure", "zincblende", "--lattice", "5.43", "--form-factor", "A8:0.1"], /--form-factor A8: unknown key/],
    [[...SI.map((a) => (a === "5.43" ? "0" : a))], /--lattice must be positive/],
    [[...SI.map((a) => (a === "5.43" ? "-5.43" : a))], /--lattice must be positive/],
    [[...SI.map((a) => (a === "5.43" ? "five" : a))], /--lattice must be a number/],
    [[...SI.map((a) => (a === "S8:0.04" ? "S8:abc" : a))], /--form-factor S8 must be a number/],
    [[...SI.map((a) => (a === "S8:0.04" ? "S8" : a))], /--form-factor must be key:value/],
    [[...SI, "--form-factor", "S3:0.1"], /--form-factor S3 is given twice/],
    [["epm", "--structure", "diamond", "--lattice", "5.43", "--form-factor", "S3:-0.21"], /--form-factor S8 is required/],
    [[...SI.map((a) => (a === "diamond" ? "wurtzite" : a))], /--structure must be diamond or zincblende/],
    [SI.slice(2), /--structure is required/],
    [[...SI.slice(0, 2), ...SI.slice(4)], /--lattice is required/],
    [[...SI, "--lattice-unit", "mile"], /--lattice-unit must be angstrom or nm/],
    [[...SI, "--form-factor-unit", "hartree"], /--form-factor-unit must be ry or ev/],
    [[...SI, "--stated-x", "one"], /--stated-x must be a number/],
    [[...SI, "--stated-l", "-1"], /--stated-l must be at least 0/],
    [[...SI, "--tolerance", "0.1"], /--tolerance needs --stated/],
    [[...SI, "--stated-gamma", "3.4", "--tolerance", "0"], /--tolerance must be positive/],
    [[...SI, "--frob"], /--frob/],
  ];
  const bad = cases.map(([args, message]): [string[], RegExp] => [args[0] === "epm" ? args : ["epm", ...args], message]);
  for (const [args, message] of bad) {
    it(`exits 2 with one line naming the argument: ${args.slice(1).join(" ")}`, async () => {
      const run = await inProcess(...args);
      expect(run.code).toBe(2);
      expect(run.stdout).toBe("");
      expect(run.stderr.trimEnd().split("\n")).toHaveLength(1);
      expect(run.stderr).toMatch(message);
    });
  }

  it("the real command exits 2 on antisymmetric form factors for diamond", async () => {
    const run = await bandledger("epm", ...SI, "--form-factor", "A3:0.1");
    expect(run.code).toBe(2);
    expect(run.stderr.trimEnd().split("\n")).toHaveLength(1);
    expect(run.stderr).toMatch(/^bandledger epm: --form-factor A3/);
  });
});

